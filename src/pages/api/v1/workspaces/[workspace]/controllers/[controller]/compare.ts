/**
 * GET ?from=N&to=M: compare two revisions (default: the head against its base) as JSON, or
 * with format=unified as one text/plain unified diff of the source and the generated files.
 */
import type { APIRoute } from 'astro';
import { dbOf, guardRead, parseQuery, respond } from '../../../../../../../lib/server/api-v1';
import { compareQuerySchema, compareRevisions, comparisonToJson, comparisonToUnified, parseTargets } from '../../../../../../../lib/server/compare';
import { json } from '../../../../../../../lib/server/http';

export const GET: APIRoute = (ctx) =>
  respond(async () => {
    const { controller } = await guardRead(ctx);
    const query = parseQuery(ctx.url, compareQuerySchema);
    const comparison = await compareRevisions(dbOf(ctx), controller, { from: query.from, to: query.to, targets: parseTargets(query.targets) });
    if (query.format === 'unified') {
      return new Response(comparisonToUnified(comparison), {
        status: 200,
        headers: {
          'Content-Type': 'text/plain; charset=utf-8',
          'Cache-Control': 'private, no-store',
          'Content-Disposition': `inline; filename="${controller.slug}-r${comparison.from.number}-r${comparison.to.number}.diff"`,
        },
      });
    }
    return json(comparisonToJson(comparison));
  });

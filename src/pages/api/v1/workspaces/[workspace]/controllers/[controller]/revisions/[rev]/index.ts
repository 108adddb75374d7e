/** GET: one revision (canonical source, interchange JSON, findings counts). */
import type { APIRoute } from 'astro';
import { dbOf, guardController, respond, revisionNumberSchema } from '../../../../../../../../../lib/server/api-v1';
import { fail } from '../../../../../../../../../lib/server/errors';
import { json } from '../../../../../../../../../lib/server/http';
import { getRevision } from '../../../../../../../../../lib/server/revisions';

export const GET: APIRoute = (ctx) =>
  respond(async () => {
    const { controller } = await guardController(ctx, 'controller.read');
    const n = revisionNumberSchema.safeParse(ctx.params.rev);
    if (!n.success) throw fail.notFound('Revision');
    const rev = await getRevision(dbOf(ctx), controller.id, n.data);
    if (!rev) throw fail.notFound('Revision');
    return json({
      revision: { number: rev.number, base: rev.baseNumber, message: rev.message, author: rev.authorName, source: rev.source, interchange: rev.interchange, findings: rev.findings, createdAt: rev.createdAt.toISOString() },
    });
  });

/**
 * POST {source, target, revision?}: generate the bundle for a draft source. Answers the files as
 * JSON for preview, or the zip itself with ?download=1. Saved revisions are downloaded through
 * the stored-bundle API; this one serves drafts and previews, so nothing is stored.
 */
import type { APIRoute } from 'astro';
import { z } from 'zod';
import { codegenTargetSchema, estimateFootprint, generateBundle } from '../../../../../../../lib/codegen';
import { guardController, respond } from '../../../../../../../lib/server/api-v1';
import { json, readJson } from '../../../../../../../lib/server/http';
import { MAX_UPLOAD_BYTES, parseOrFail } from '../../../../../../../lib/server/revisions';

const bodySchema = z
  .object({
    source: z.string().min(1),
    target: codegenTargetSchema,
    revision: z.string().regex(/^[A-Za-z0-9][A-Za-z0-9-]{0,31}$/, 'a revision label is letters, digits or -, e.g. r3 or draft').default('draft'),
  })
  .strict();

export const POST: APIRoute = (ctx) =>
  respond(async () => {
    const { controller } = await guardController(ctx, 'bundle.download');
    const body = await readJson(ctx.request, bodySchema, { maxBytes: MAX_UPLOAD_BYTES * 2 + 64 * 1024 });
    const table = parseOrFail(body.source);
    const bundle = await generateBundle(table, { target: body.target, revision: body.revision });
    if (ctx.url.searchParams.get('download') === '1') {
      return new Response(Buffer.from(bundle.zip), {
        status: 200,
        headers: {
          'Content-Type': 'application/zip',
          'Content-Disposition': `attachment; filename="${controller.slug}-${body.revision}-${body.target}.zip"`,
          'Cache-Control': 'no-store',
          ETag: `"${bundle.sha256}"`,
        },
      });
    }
    return json({
      files: bundle.files.map((f) => ({ path: f.path, text: f.content, size: new TextEncoder().encode(f.content).length })),
      sha256: bundle.sha256,
      zipBytes: bundle.zip.length,
      footprint: estimateFootprint(table),
    });
  });

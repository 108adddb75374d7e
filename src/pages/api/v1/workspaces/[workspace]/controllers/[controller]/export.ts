/** GET ?format=text|json|kiss2|csv[&rev=N]: a revision (head by default) as a file download. */
import type { APIRoute } from 'astro';
import { z } from 'zod';
import { FORMATS } from '../../../../../../../lib/engine/formats';
import { exportController } from '../../../../../../../lib/server/controllers';
import { dbOf, guardController, respond, revisionNumberSchema } from '../../../../../../../lib/server/api-v1';
import { zodToApiError } from '../../../../../../../lib/server/errors';

const querySchema = z.object({ format: z.enum(FORMATS).default('text'), rev: revisionNumberSchema.optional() });

export const GET: APIRoute = (ctx) =>
  respond(async () => {
    const { controller } = await guardController(ctx, 'controller.read');
    const q = querySchema.safeParse({ format: ctx.url.searchParams.get('format') ?? undefined, rev: ctx.url.searchParams.get('rev') ?? undefined });
    if (!q.success) throw zodToApiError(q.error);
    const out = await exportController(dbOf(ctx), controller, q.data.format, q.data.rev);
    return new Response(out.body, {
      status: 200,
      headers: { 'Content-Type': out.type, 'Content-Disposition': `attachment; filename="${out.filename}"`, 'Cache-Control': 'no-store' },
    });
  });

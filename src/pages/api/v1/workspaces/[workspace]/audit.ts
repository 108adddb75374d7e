import type { APIRoute } from 'astro';
import { z } from 'zod';
import { listAudit } from '../../../../../lib/server/audit';
import { zodToApiError } from '../../../../../lib/server/errors';
import { json, requireUser } from '../../../../../lib/server/http';
import { requireMemberAction } from '../../../../../lib/server/permissions';

const query = z.object({
  before: z.coerce.number().int().positive().optional(),
  limit: z.coerce.number().int().min(1).max(200).optional(),
});

/** The workspace audit log, newest first; `?before=<id>&limit=<n>` pages back (owners). */
export const GET: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  const m = await requireMemberAction(ctx.locals.db, user.id, ctx.params.workspace ?? '', 'audit.read');
  const parsed = query.safeParse(Object.fromEntries(ctx.url.searchParams));
  if (!parsed.success) throw zodToApiError(parsed.error);
  return json(await listAudit(ctx.locals.db, m.workspace.id, parsed.data));
};

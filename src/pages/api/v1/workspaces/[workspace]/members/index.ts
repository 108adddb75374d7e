import type { APIRoute } from 'astro';
import { json, requireUser } from '../../../../../../lib/server/http';
import { requireMemberAction } from '../../../../../../lib/server/permissions';
import { listMembers } from '../../../../../../lib/server/workspaces';

/** The members of a workspace (any member). */
export const GET: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  const m = await requireMemberAction(ctx.locals.db, user.id, ctx.params.workspace ?? '', 'members.read');
  return json({ members: await listMembers(ctx.locals.db, m.workspace.id) });
};

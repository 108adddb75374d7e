import type { APIRoute } from 'astro';
import { json, requireUser } from '../../../../../../lib/server/http';
import { revokeInvite } from '../../../../../../lib/server/invites';
import { requireMember } from '../../../../../../lib/server/permissions';

/** Withdraws an open invitation (owners). */
export const DELETE: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  const m = await requireMember(ctx.locals.db, user.id, ctx.params.workspace ?? '');
  await revokeInvite(ctx.locals.db, m, ctx.params.inviteId ?? '');
  return json({ ok: true });
};

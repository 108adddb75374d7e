import type { APIRoute } from 'astro';
import { json, linkOrigin, readJson, requireUser } from '../../../../../../lib/server/http';
import { createInvite, createInviteSchema, listOpenInvites } from '../../../../../../lib/server/invites';
import { requireMember } from '../../../../../../lib/server/permissions';

/** Open invitations of the workspace (owners). */
export const GET: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  const m = await requireMember(ctx.locals.db, user.id, ctx.params.workspace ?? '');
  return json({ invites: await listOpenInvites(ctx.locals.db, m) });
};

/** Invites an address with a role and e-mails the link (owners). */
export const POST: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  const m = await requireMember(ctx.locals.db, user.id, ctx.params.workspace ?? '');
  const body = await readJson(ctx.request, createInviteSchema);
  const { invite } = await createInvite(ctx.locals.db, m, user, body, linkOrigin(ctx));
  return json({ invite: { id: invite.id, email: invite.email, role: invite.role, expiresAt: invite.expiresAt } }, 201);
};

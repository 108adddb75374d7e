import type { APIRoute } from 'astro';
import { json } from '../../../../../lib/server/http';
import { declineInvite } from '../../../../../lib/server/invites';

/** Declines an invitation (no account needed: the token is the credential). */
export const POST: APIRoute = async ({ params, locals }) => {
  await declineInvite(locals.db, params.token ?? '', locals.user?.id ?? null);
  return json({ ok: true });
};

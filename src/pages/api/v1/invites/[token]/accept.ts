import type { APIRoute } from 'astro';
import { json, requireUser } from '../../../../../lib/server/http';
import { acceptInvite } from '../../../../../lib/server/invites';

/** Accepts an invitation for the signed-in user (who must hold the invited address). */
export const POST: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  return json(await acceptInvite(ctx.locals.db, user.id, ctx.params.token ?? ''));
};

import type { APIRoute } from 'astro';
import { resendVerification } from '../../../../lib/server/accounts';
import { json, linkOrigin, requireUser } from '../../../../lib/server/http';

/** Sends a new confirmation link to the signed-in, unconfirmed user. */
export const POST: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  await resendVerification(ctx.locals.db, user.id, linkOrigin(ctx));
  return json({ ok: true }, 202);
};

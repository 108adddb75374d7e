import type { APIRoute } from 'astro';
import { resetPassword, resetSchema } from '../../../../lib/server/accounts';
import { clientKey, json, readJson } from '../../../../lib/server/http';

/** Sets a new password with the token from the mailed link; every session ends. */
export const POST: APIRoute = async (ctx) => {
  const body = await readJson(ctx.request, resetSchema);
  return json({ user: await resetPassword(ctx.locals.db, body, { clientKey: clientKey(ctx) }) });
};

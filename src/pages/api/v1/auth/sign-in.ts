import type { APIRoute } from 'astro';
import { signIn, signInSchema } from '../../../../lib/server/accounts';
import { clientKey, json, readJson } from '../../../../lib/server/http';

/** Signs in with e-mail and password (rate-limited) and sets the session cookie. */
export const POST: APIRoute = async (ctx) => {
  const body = await readJson(ctx.request, signInSchema);
  const { user, cookie } = await signIn(ctx.locals.db, body, { clientKey: clientKey(ctx) });
  ctx.cookies.set(cookie.name, cookie.value, cookie.attributes);
  return json({ user });
};

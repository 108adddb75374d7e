import type { APIRoute } from 'astro';
import { signUp, signUpSchema } from '../../../../lib/server/accounts';
import { clientKey, json, linkOrigin, readJson } from '../../../../lib/server/http';

/** Creates an account, e-mails the confirmation link and starts a session. */
export const POST: APIRoute = async (ctx) => {
  const body = await readJson(ctx.request, signUpSchema);
  const { user, cookie } = await signUp(ctx.locals.db, body, { origin: linkOrigin(ctx), clientKey: clientKey(ctx) });
  ctx.cookies.set(cookie.name, cookie.value, cookie.attributes);
  return json({ user }, 201);
};

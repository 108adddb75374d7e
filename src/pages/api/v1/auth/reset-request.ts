import type { APIRoute } from 'astro';
import { requestPasswordReset, resetRequestSchema } from '../../../../lib/server/accounts';
import { clientKey, json, linkOrigin, readJson } from '../../../../lib/server/http';

/** E-mails a reset link when the address has an account; the answer is the same either way. */
export const POST: APIRoute = async (ctx) => {
  const body = await readJson(ctx.request, resetRequestSchema);
  await requestPasswordReset(ctx.locals.db, body, { origin: linkOrigin(ctx), clientKey: clientKey(ctx) });
  return json({ ok: true }, 202);
};

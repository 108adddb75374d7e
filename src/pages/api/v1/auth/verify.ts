import type { APIRoute } from 'astro';
import { z } from 'zod';
import { verifyEmail } from '../../../../lib/server/accounts';
import { json, readJson } from '../../../../lib/server/http';

/** Confirms an e-mail address with the token from the mailed link. */
export const POST: APIRoute = async ({ request, locals }) => {
  const { token } = await readJson(request, z.object({ token: z.string().min(10).max(200) }));
  return json({ user: await verifyEmail(locals.db, token) });
};

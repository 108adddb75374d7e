import type { APIRoute } from 'astro';
import { fail } from '../../../../../lib/server/errors';
import { json } from '../../../../../lib/server/http';
import { previewInvite } from '../../../../../lib/server/invites';

/** What an invitation link offers (the token is the credential). */
export const GET: APIRoute = async ({ params, locals }) => {
  const invite = await previewInvite(locals.db, params.token ?? '');
  if (!invite) throw fail.notFound('Invitation');
  return json({ invite });
};

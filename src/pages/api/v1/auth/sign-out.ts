import type { APIRoute } from 'astro';
import { recordSignOut } from '../../../../lib/server/accounts';
import { json } from '../../../../lib/server/http';
import { blankSessionCookie, invalidateSession } from '../../../../lib/server/session';

/** Ends the current session and clears the cookie. */
export const POST: APIRoute = async ({ locals, cookies }) => {
  const cookie = locals.session ? await invalidateSession(locals.db, locals.session.id) : blankSessionCookie(locals.db);
  if (locals.user) await recordSignOut(locals.db, locals.user.id);
  cookies.set(cookie.name, cookie.value, cookie.attributes);
  return json({ ok: true });
};

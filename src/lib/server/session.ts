/**
 * Sessions. The only module that imports lucia: lucia 3 is deprecated upstream,
 * so replacing it with hand-rolled sessions (same table, same cookie) is a change
 * to this file alone.
 */
import { DrizzlePostgreSQLAdapter } from '@lucia-auth/adapter-drizzle';
import { Lucia, TimeSpan } from 'lucia';
import { readConfig } from './config';
import type { Db } from './db';
import { sessions, users } from './schema';

/** The signed-in user as pages see it. */
export type SessionUser = { id: string; email: string; displayName: string; emailVerified: boolean };
/** The current session. */
export type SessionInfo = { id: string; expiresAt: Date; fresh: boolean };
/** A cookie to set on the response (Astro `cookies.set(name, value, attributes)`). */
export type SessionCookie = {
  name: string;
  value: string;
  attributes: {
    httpOnly?: boolean;
    secure?: boolean;
    sameSite?: 'lax' | 'strict' | 'none';
    path?: string;
    maxAge?: number;
    expires?: Date;
  };
};

/** Name of the session cookie. */
export const SESSION_COOKIE = 'quiesce_session';

function createLucia(db: Db) {
  return new Lucia(new DrizzlePostgreSQLAdapter(db, sessions, users), {
    sessionExpiresIn: new TimeSpan(30, 'd'),
    sessionCookie: {
      name: SESSION_COOKIE,
      attributes: { secure: readConfig().secureCookies, sameSite: 'lax' },
    },
    getUserAttributes: (row) => ({
      email: row.email,
      displayName: row.displayName,
      emailVerified: row.emailVerifiedAt !== null && row.emailVerifiedAt !== undefined,
    }),
  });
}

declare module 'lucia' {
  interface Register {
    Lucia: ReturnType<typeof createLucia>;
    DatabaseUserAttributes: { email: string; displayName: string; emailVerifiedAt: Date | null };
  }
}

const instances = new WeakMap<Db, ReturnType<typeof createLucia>>();
function luciaFor(db: Db) {
  let lucia = instances.get(db);
  if (!lucia) {
    lucia = createLucia(db);
    instances.set(db, lucia);
  }
  return lucia;
}

function toCookie(cookie: { name: string; value: string; attributes: SessionCookie['attributes'] }): SessionCookie {
  return { name: cookie.name, value: cookie.value, attributes: { ...cookie.attributes, httpOnly: true, path: '/' } };
}

/** Starts a session for a user and returns its id and cookie. */
export async function createSession(db: Db, userId: string): Promise<{ id: string; cookie: SessionCookie }> {
  const lucia = luciaFor(db);
  const session = await lucia.createSession(userId, {});
  return { id: session.id, cookie: toCookie(lucia.createSessionCookie(session.id)) };
}

/**
 * Checks a session id from the cookie. Returns the user and session (null when
 * invalid) and the cookie to set: refreshed when the session was extended,
 * blank when it was invalid, none otherwise.
 */
export async function validateSession(
  db: Db,
  sessionId: string | undefined,
): Promise<{ user: SessionUser | null; session: SessionInfo | null; cookie: SessionCookie | null }> {
  const lucia = luciaFor(db);
  if (!sessionId) return { user: null, session: null, cookie: null };
  const { session, user } = await lucia.validateSession(sessionId);
  if (!session || !user) return { user: null, session: null, cookie: toCookie(lucia.createBlankSessionCookie()) };
  return {
    user: { id: user.id, email: user.email, displayName: user.displayName, emailVerified: user.emailVerified },
    session: { id: session.id, expiresAt: session.expiresAt, fresh: session.fresh },
    cookie: session.fresh ? toCookie(lucia.createSessionCookie(session.id)) : null,
  };
}

/** Ends one session and returns the blank cookie that clears it in the browser. */
export async function invalidateSession(db: Db, sessionId: string): Promise<SessionCookie> {
  const lucia = luciaFor(db);
  await lucia.invalidateSession(sessionId);
  return toCookie(lucia.createBlankSessionCookie());
}

/** Ends every session of a user (after a password reset). */
export async function invalidateUserSessions(db: Db, userId: string): Promise<void> {
  await luciaFor(db).invalidateUserSessions(userId);
}

/** Returns the blank cookie that clears the session cookie. */
export function blankSessionCookie(db: Db): SessionCookie {
  return toCookie(luciaFor(db).createBlankSessionCookie());
}

/** Removes expired sessions (called at start). */
export async function deleteExpiredSessions(db: Db): Promise<void> {
  await luciaFor(db).deleteExpiredSessions();
}

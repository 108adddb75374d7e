import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import {
  requestPasswordReset,
  resetPassword,
  signIn,
  signUp,
  verifyEmail,
} from '../../../src/lib/server/accounts';
import type { DatabaseHandle } from '../../../src/lib/server/db';
import { sessions, users, emailTokens } from '../../../src/lib/server/schema';
import { validateSession, SESSION_COOKIE } from '../../../src/lib/server/session';
import { verifyPassword } from '../../../src/lib/server/passwords';
import { BACKENDS } from './support/backends';
import { catchRejection } from './support/errors';
import { lastMailTo, linkIn, tokenOf } from './support/mail';

const ORIGIN = 'http://127.0.0.1:4999';
let client = 0;
const ctx = () => ({ origin: ORIGIN, clientKey: `test-client-${backendTag}-${++client}` });
let backendTag = '';

describe.each(BACKENDS)('accounts on $name', (backend) => {
  let handle: DatabaseHandle;
  beforeAll(async () => {
    delete process.env.SMTP_URL;
    backendTag = backend.name;
    handle = await backend.open();
  });
  afterAll(async () => {
    await handle?.close();
  });

  it('signs up with a lower-cased address, hashes with argon2id, mails a confirmation link and starts a session', async () => {
    const { db } = handle;
    const { user, cookie } = await signUp(db, { email: '  Maja.Lind@Example.TEST ', password: 'correct horse battery', displayName: 'Maja Lind' }, ctx());
    expect(user.email).toBe('maja.lind@example.test');
    expect(user.emailVerified).toBe(false);
    const [row] = await db.select().from(users).where(eq(users.id, user.id));
    expect(row?.passwordHash.startsWith('$argon2id$')).toBe(true);
    expect(await verifyPassword(row!.passwordHash, 'correct horse battery')).toBe(true);
    expect(cookie.name).toBe(SESSION_COOKIE);
    expect(cookie.attributes.httpOnly).toBe(true);
    expect(cookie.attributes.sameSite).toBe('lax');
    const session = await validateSession(db, cookie.value);
    expect(session.user?.id).toBe(user.id);

    const mail = await lastMailTo(db, 'maja.lind@example.test');
    expect(mail.subject).toMatch(/Confirm your e-mail address/);
    expect(mail.html).toContain('<a href=');
    const link = linkIn(mail.text, '/auth/verify/');
    expect(link.startsWith(`${ORIGIN}/auth/verify/`)).toBe(true);
    // Only the hash of the token is stored.
    const tokens = await db.select().from(emailTokens).where(eq(emailTokens.userId, user.id));
    expect(tokens.map((t) => t.tokenHash)).not.toContain(tokenOf(link));

    const verified = await verifyEmail(db, tokenOf(link));
    expect(verified.emailVerified).toBe(true);
    const again = await catchRejection(verifyEmail(db, tokenOf(link)));
    expect(again.status).toBe(400);
    expect(again.code).toBe('invalid_token');
  });

  it('refuses a second account for the same address (any case) with 409 on field email', async () => {
    const error = await catchRejection(
      signUp(handle.db, { email: 'MAJA.LIND@example.test', password: 'another password', displayName: 'Other' }, ctx()),
    );
    expect(error.status).toBe(409);
    expect(error.field).toBe('email');
  });

  it('answers bad sign-up input with 400 naming the field', async () => {
    const short = await catchRejection(signUp(handle.db, { email: 'x@example.test', password: 'short', displayName: 'X' }, ctx()));
    expect(short.status).toBe(400);
    expect(short.field).toBe('password');
    const bad = await catchRejection(signUp(handle.db, { email: 'not-an-address', password: 'long enough pass', displayName: 'X' }, ctx()));
    expect(bad.field).toBe('email');
  });

  it('signs in with the right password only, and rate-limits repeated failures with 429', async () => {
    const { db } = handle;
    const ok = await signIn(db, { email: 'maja.lind@example.test', password: 'correct horse battery' }, { clientKey: `sign-in-ok-${backend.name}` });
    expect(ok.user.email).toBe('maja.lind@example.test');
    const wrong = await catchRejection(signIn(db, { email: 'maja.lind@example.test', password: 'wrong password' }, { clientKey: `sign-in-ok-${backend.name}` }));
    expect(wrong.status).toBe(401);
    const unknown = await catchRejection(signIn(db, { email: 'nobody@example.test', password: 'whatever it is' }, { clientKey: `sign-in-ok-${backend.name}` }));
    expect(unknown.status).toBe(401);
    expect(unknown.message).toBe(wrong.message);
    const statuses: number[] = [];
    for (let i = 0; i < 10; i += 1) {
      statuses.push((await catchRejection(signIn(db, { email: 'maja.lind@example.test', password: `guess ${i}` }, { clientKey: `attacker-${backend.name}` }))).status);
    }
    expect(statuses.slice(0, 8).every((s) => s === 401)).toBe(true);
    expect(statuses.slice(8)).toEqual([429, 429]);
    // Even the right password is refused while the limit holds.
    const limited = await catchRejection(signIn(db, { email: 'maja.lind@example.test', password: 'correct horse battery' }, { clientKey: `attacker-${backend.name}` }));
    expect(limited.status).toBe(429);
    expect(limited.headers['Retry-After']).toMatch(/^\d+$/);
  });

  it('resets a password by e-mail link once, ending every session', async () => {
    const { db } = handle;
    const before = await signIn(db, { email: 'maja.lind@example.test', password: 'correct horse battery' }, { clientKey: `reset-flow-${backend.name}` });
    await requestPasswordReset(db, { email: 'Maja.Lind@example.test' }, ctx());
    const mail = await lastMailTo(db, 'maja.lind@example.test');
    expect(mail.subject).toMatch(/Reset your Quiesce password/);
    const token = tokenOf(linkIn(mail.text, '/auth/reset/'));
    await resetPassword(db, { token, password: 'a brand new passphrase' }, { clientKey: `reset-flow-${backend.name}` });
    expect((await validateSession(db, before.cookie.value)).user).toBeNull();
    const [row] = await db.select().from(users).where(eq(users.email, 'maja.lind@example.test'));
    const remaining = await db.select().from(sessions).where(eq(sessions.userId, row!.id));
    expect(remaining).toEqual([]);
    const reused = await catchRejection(resetPassword(db, { token, password: 'yet another passphrase' }, { clientKey: `reset-flow-${backend.name}` }));
    expect(reused.status).toBe(400);
    const old = await catchRejection(signIn(db, { email: 'maja.lind@example.test', password: 'correct horse battery' }, { clientKey: `reset-flow-${backend.name}` }));
    expect(old.status).toBe(401);
    await signIn(db, { email: 'maja.lind@example.test', password: 'a brand new passphrase' }, { clientKey: `reset-flow-${backend.name}` });
  });

  it('answers a reset request for an unknown address the same way, sending nothing', async () => {
    await requestPasswordReset(handle.db, { email: 'ghost@example.test' }, ctx());
    await expect(lastMailTo(handle.db, 'ghost@example.test')).rejects.toThrow(/no mail/);
  });

  it('refuses an expired reset link', async () => {
    const { db } = handle;
    await requestPasswordReset(db, { email: 'maja.lind@example.test' }, ctx());
    const token = tokenOf(linkIn((await lastMailTo(db, 'maja.lind@example.test')).text, '/auth/reset/'));
    await db.update(emailTokens).set({ expiresAt: new Date(Date.now() - 1000) });
    const expired = await catchRejection(resetPassword(db, { token, password: 'too late passphrase' }, { clientKey: `expired-${backend.name}` }));
    expect(expired.status).toBe(400);
    expect(expired.code).toBe('invalid_token');
  });
});

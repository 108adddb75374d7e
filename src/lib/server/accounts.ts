/**
 * Accounts: sign-up, sign-in, e-mail verification and password reset.
 * E-mail links carry a random token; only its SHA-256 is stored, each works once.
 */
import { and, eq, gt, isNull } from 'drizzle-orm';
import { z } from 'zod';
import { recordAudit } from './audit';
import type { Db } from './db';
import { ApiError, fail } from './errors';
import { newId, newToken, sha256Hex } from './ids';
import { sendMail } from './mail';
import { resetMail, verificationMail } from './mail-templates';
import { burnPasswordCheck, hashPassword, verifyPassword } from './passwords';
import { checkLimit, consumeLimit, resetLimit } from './rate-limits';
import { emailTokens, users, type EmailTokenPurpose, type UserRow } from './schema';
import { createSession, invalidateUserSessions, type SessionCookie } from './session';

/** An e-mail address, trimmed and lower-cased. */
export const emailSchema = z
  .string()
  .trim()
  .min(3, 'Enter an e-mail address.')
  .max(254, 'The address is too long.')
  .email('Enter a valid e-mail address.')
  .transform((s) => s.toLowerCase());

/** A new password: 10 to 256 characters. */
export const passwordSchema = z
  .string()
  .min(10, 'Use at least 10 characters.')
  .max(256, 'Use at most 256 characters.');

/** A display name shown to other members. */
export const displayNameSchema = z
  .string()
  .trim()
  .min(1, 'Enter your name.')
  .max(80, 'Use at most 80 characters.')
  .refine((s) => !/[\u0000-\u001f<>]/.test(s), 'Names may not contain control characters or angle brackets.');

/** Sign-up input. */
export const signUpSchema = z.object({ email: emailSchema, password: passwordSchema, displayName: displayNameSchema });
/** Sign-in input (no length rules beyond a bound, so old passwords still work). */
export const signInSchema = z.object({ email: emailSchema, password: z.string().min(1, 'Enter your password.').max(256) });
/** Reset-request input. */
export const resetRequestSchema = z.object({ email: emailSchema });
/** Reset input. */
export const resetSchema = z.object({ token: z.string().min(10).max(200), password: passwordSchema });

const VERIFY_TTL_MS = 48 * 3600_000;
const RESET_TTL_MS = 3600_000;

/** Public view of an account. */
export type AccountView = { id: string; email: string; displayName: string; emailVerified: boolean; createdAt: Date };

/** Returns the public view of a user row. */
export function userToAccountView(row: UserRow): AccountView {
  return {
    id: row.id,
    email: row.email,
    displayName: row.displayName,
    emailVerified: row.emailVerifiedAt !== null,
    createdAt: row.createdAt,
  };
}

/** Finds a user by e-mail address (any case). */
export async function findUserByEmail(db: Db, email: string): Promise<UserRow | null> {
  const [row] = await db.select().from(users).where(eq(users.email, email.trim().toLowerCase()));
  return row ?? null;
}

/** Finds a user by id. */
export async function findUserById(db: Db, id: string): Promise<UserRow | null> {
  const [row] = await db.select().from(users).where(eq(users.id, id));
  return row ?? null;
}

async function issueEmailToken(db: Db, userId: string, purpose: EmailTokenPurpose, ttlMs: number): Promise<string> {
  const token = newToken();
  await db.insert(emailTokens).values({
    id: newId(),
    userId,
    purpose,
    tokenHash: sha256Hex(token),
    expiresAt: new Date(Date.now() + ttlMs),
  });
  return token;
}

/** The condition on email_tokens for a token of this purpose that is neither used nor expired. */
function matchUsableToken(token: string, purpose: EmailTokenPurpose) {
  return and(eq(emailTokens.tokenHash, sha256Hex(token)), eq(emailTokens.purpose, purpose), isNull(emailTokens.usedAt), gt(emailTokens.expiresAt, new Date()));
}

/** Marks a token used and returns its user id; 400 if unknown, used or expired. */
async function consumeEmailToken(db: Db, token: string, purpose: EmailTokenPurpose): Promise<string> {
  const [row] = await db
    .update(emailTokens)
    .set({ usedAt: new Date() })
    .where(matchUsableToken(token, purpose))
    .returning({ userId: emailTokens.userId });
  if (!row) {
    throw new ApiError(400, 'invalid_token', 'This link is invalid, was already used, or has expired. Ask for a new one.', {
      field: 'token',
    });
  }
  return row.userId;
}

/** Returns whether a token of this purpose is currently usable (to show the reset form or an error). */
export async function isEmailTokenUsable(db: Db, token: string, purpose: EmailTokenPurpose): Promise<boolean> {
  const [row] = await db
    .select({ id: emailTokens.id })
    .from(emailTokens)
    .where(matchUsableToken(token, purpose));
  return row !== undefined;
}

/** Creates an account, sends the confirmation mail, and signs the new user in. */
export async function signUp(
  db: Db,
  input: z.input<typeof signUpSchema>,
  context: { origin: string; clientKey: string },
): Promise<{ user: AccountView; cookie: SessionCookie }> {
  const data = signUpSchema.parse(input);
  await consumeLimit('signUpPerClient', context.clientKey);
  const passwordHash = await hashPassword(data.password);
  const id = newId();
  const [row] = await db
    .insert(users)
    .values({ id, email: data.email, passwordHash, displayName: data.displayName })
    .returning();
  if (!row) throw new Error('insert returned no row');
  await recordAudit(db, { actorUserId: id, action: 'auth.sign-up', target: `user:${id}` });
  await sendVerification(db, row, context.origin);
  const session = await createSession(db, id);
  return { user: userToAccountView(row), cookie: session.cookie };
}

async function sendVerification(db: Db, row: UserRow, origin: string): Promise<void> {
  const token = await issueEmailToken(db, row.id, 'verify', VERIFY_TTL_MS);
  await sendMail(db, verificationMail(row.email, row.displayName, `${origin}/auth/verify/${token}`));
}

/** Sends a new confirmation mail to a signed-in, unverified user. */
export async function resendVerification(db: Db, userId: string, origin: string): Promise<void> {
  const row = await findUserById(db, userId);
  if (!row) throw fail.unauthenticated();
  if (row.emailVerifiedAt) throw fail.conflict('Your address is already confirmed.', undefined, 'already_verified');
  await consumeLimit('mailPerUser', userId);
  await sendVerification(db, row, origin);
}

/** Confirms an address from the e-mailed link; returns the user. */
export async function verifyEmail(db: Db, token: string): Promise<AccountView> {
  const userId = await consumeEmailToken(db, token, 'verify');
  const [row] = await db
    .update(users)
    .set({ emailVerifiedAt: new Date() })
    .where(eq(users.id, userId))
    .returning();
  if (!row) throw fail.notFound('Account');
  await recordAudit(db, { actorUserId: userId, action: 'auth.email-verified', target: `user:${userId}` });
  return userToAccountView(row);
}

/** Checks e-mail and password (rate-limited) and starts a session; 401 on a wrong pair. */
export async function signIn(
  db: Db,
  input: z.input<typeof signInSchema>,
  context: { clientKey: string },
): Promise<{ user: AccountView; cookie: SessionCookie }> {
  const data = signInSchema.parse(input);
  const accountKey = `${data.email}|${context.clientKey}`;
  await consumeLimit('signInPerClient', context.clientKey);
  await checkLimit('signInPerAccount', accountKey);
  const row = await findUserByEmail(db, data.email);
  const ok = row ? await verifyPassword(row.passwordHash, data.password) : (await burnPasswordCheck(data.password), false);
  if (!row || !ok) {
    await consumeLimit('signInPerAccount', accountKey).catch(() => undefined);
    if (row) await recordAudit(db, { actorUserId: row.id, action: 'auth.sign-in-failed', target: `user:${row.id}` });
    throw new ApiError(401, 'invalid_credentials', 'The e-mail address or the password is not right.', { field: 'password' });
  }
  await resetLimit('signInPerAccount', accountKey);
  const session = await createSession(db, row.id);
  await recordAudit(db, { actorUserId: row.id, action: 'auth.sign-in', target: `user:${row.id}` });
  return { user: userToAccountView(row), cookie: session.cookie };
}

/** Sends a reset link if the address has an account; answers the same either way (rate-limited). */
export async function requestPasswordReset(
  db: Db,
  input: z.input<typeof resetRequestSchema>,
  context: { origin: string; clientKey: string },
): Promise<void> {
  const data = resetRequestSchema.parse(input);
  await consumeLimit('resetPerClient', context.clientKey);
  await consumeLimit('resetPerAccount', data.email);
  const row = await findUserByEmail(db, data.email);
  if (!row) return;
  const token = await issueEmailToken(db, row.id, 'reset', RESET_TTL_MS);
  await sendMail(db, resetMail(row.email, `${context.origin}/auth/reset/${token}`));
  await recordAudit(db, { actorUserId: row.id, action: 'auth.reset-requested', target: `user:${row.id}` });
}

/** Sets a new password from a reset link, ends every session, and confirms the address. */
export async function resetPassword(
  db: Db,
  input: z.input<typeof resetSchema>,
  context: { clientKey: string },
): Promise<AccountView> {
  const data = resetSchema.parse(input);
  await consumeLimit('resetPerClient', context.clientKey);
  const userId = await consumeEmailToken(db, data.token, 'reset');
  const passwordHash = await hashPassword(data.password);
  const [current] = await db.select({ verified: users.emailVerifiedAt }).from(users).where(eq(users.id, userId));
  const [row] = await db
    .update(users)
    // The link reached the mailbox, which also proves the address.
    .set({ passwordHash, emailVerifiedAt: current?.verified ?? new Date() })
    .where(eq(users.id, userId))
    .returning();
  if (!row) throw fail.notFound('Account');
  await invalidateUserSessions(db, userId);
  await recordAudit(db, { actorUserId: userId, action: 'auth.password-reset', target: `user:${userId}` });
  return userToAccountView(row);
}

/** Changes the display name of the signed-in user. */
export async function updateDisplayName(db: Db, userId: string, displayName: string): Promise<AccountView> {
  const name = displayNameSchema.parse(displayName);
  const [row] = await db.update(users).set({ displayName: name }).where(eq(users.id, userId)).returning();
  if (!row) throw fail.notFound('Account');
  return userToAccountView(row);
}

/** Records a sign-out in the audit log. */
export async function recordSignOut(db: Db, userId: string): Promise<void> {
  await recordAudit(db, { actorUserId: userId, action: 'auth.sign-out', target: `user:${userId}` });
}

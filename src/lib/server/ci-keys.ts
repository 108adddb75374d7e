/**
 * CI keys: read-only bearer tokens scoped to one workspace, optionally narrowed to some
 * controllers. Owners create and revoke them. The secret is shown once and only its SHA-256
 * is stored; a revoked key is refused on the very next request because every request looks
 * the key up in the database (no cache). The last use is recorded at most once a minute per
 * key, together with a `ci-key.used` audit entry, so a busy CI farm does not turn every
 * download into a write.
 */
import { and, asc, eq, inArray, isNull, lt, or, sql } from 'drizzle-orm';
import { z } from 'zod';
import { recordAudit } from './audit';
import { bumpDownloadCache } from './download-cache';
import type { Db } from './db';
import { fail } from './errors';
import { newId, newToken, sha256Hex } from './ids';
import { requireAction, type MemberContext } from './permissions';
import { ciKeys, controllers, users, workspaces, type CiKeyRow } from './schema';

/** Every key starts with this, so it is recognisable in logs and secret scanners. */
export const CI_KEY_PREFIX = 'qk_';

/** How many characters of a key are kept in the clear to tell keys apart. */
export const CI_KEY_SHOWN_CHARS = 11;

/** Minimum time between two recorded uses of one key. */
export const CI_KEY_USE_INTERVAL_MS = 60_000;

/** Input of createCiKey (the keys page and the API parse with this). */
export const createCiKeySchema = z
  .object({
    name: z.string().trim().min(1, 'Give the key a name, e.g. the CI job it is for.').max(80, 'A key name is at most 80 characters.'),
    /** Controller slugs the key may read; omitted or empty: every controller of the workspace. */
    controllers: z.array(z.string().trim().min(1).max(64)).max(200).optional(),
  })
  .strict();

/** A key as owners see it (never the secret). */
export const ciKeyViewSchema = z.object({
  id: z.string(),
  name: z.string(),
  /** The first characters of the key, to tell keys apart. */
  prefix: z.string(),
  /** Controller slugs, or null for the whole workspace. */
  controllers: z.array(z.string()).nullable(),
  createdBy: z.string().nullable(),
  createdAt: z.string(),
  lastUsedAt: z.string().nullable(),
  revokedAt: z.string().nullable(),
});

/** A key as owners see it. */
export type CiKeyView = z.infer<typeof ciKeyViewSchema>;

/** The SHA-256 stored for a key secret. */
export function ciKeyToHash(secret: string): string {
  return sha256Hex(secret);
}

/** The part of a key shown in lists. */
export function ciKeyToPrefix(secret: string): string {
  return secret.slice(0, CI_KEY_SHOWN_CHARS);
}

/** A fresh key secret (256 random bits). */
export function generateCiKeySecret(): string {
  return `${CI_KEY_PREFIX}${newToken()}`;
}

async function controllerIdsForSlugs(db: Db, workspaceId: string, slugs: string[]): Promise<string[]> {
  const unique = [...new Set(slugs)];
  const rows = await db
    .select({ id: controllers.id, slug: controllers.slug })
    .from(controllers)
    .where(and(eq(controllers.workspaceId, workspaceId), inArray(controllers.slug, unique)));
  const found = new Map(rows.map((r) => [r.slug, r.id] as const));
  const missing = unique.filter((s) => !found.has(s));
  if (missing.length) throw fail.badRequest(`No controller ${missing.map((m) => `"${m}"`).join(', ')} in this workspace.`, 'controllers');
  return unique.map((s) => found.get(s)!).sort();
}

/** Creates a key (owners only); returns its view and the secret, which is never shown again. */
export async function createCiKey(
  db: Db,
  member: MemberContext,
  input: z.input<typeof createCiKeySchema>,
): Promise<{ key: CiKeyView; secret: string }> {
  requireAction(member, 'keys.manage');
  const data = createCiKeySchema.parse(input);
  const ids = data.controllers && data.controllers.length > 0 ? await controllerIdsForSlugs(db, member.workspace.id, data.controllers) : null;
  const secret = generateCiKeySecret();
  const id = newId();
  await db.transaction(async (tx) => {
    await tx.insert(ciKeys).values({
      id,
      workspaceId: member.workspace.id,
      name: data.name,
      keyHash: ciKeyToHash(secret),
      prefix: ciKeyToPrefix(secret),
      controllerIds: ids,
      createdBy: member.userId,
    });
    await recordAudit(tx, {
      workspaceId: member.workspace.id,
      actorUserId: member.userId,
      action: 'ci-key.created',
      target: `ci-key:${id}`,
      detail: { name: data.name, prefix: ciKeyToPrefix(secret), controllers: data.controllers?.length ? [...new Set(data.controllers)].sort() : 'all' },
    });
  });
  const key = (await listCiKeys(db, member)).find((k) => k.id === id);
  if (!key) throw new Error('created key not found');
  return { key, secret };
}

/** Lists a workspace's keys, newest first, revoked ones last (owners only). */
export async function listCiKeys(db: Db, member: MemberContext): Promise<CiKeyView[]> {
  requireAction(member, 'keys.manage');
  const rows = await db
    .select({ key: ciKeys, createdByName: users.displayName })
    .from(ciKeys)
    .leftJoin(users, eq(users.id, ciKeys.createdBy))
    .where(eq(ciKeys.workspaceId, member.workspace.id))
    .orderBy(asc(ciKeys.createdAt));
  const slugRows = await db
    .select({ id: controllers.id, slug: controllers.slug })
    .from(controllers)
    .where(eq(controllers.workspaceId, member.workspace.id));
  const slugOf = new Map(slugRows.map((r) => [r.id, r.slug] as const));
  return rows
    .map(({ key, createdByName }) => ({
      id: key.id,
      name: key.name,
      prefix: key.prefix,
      controllers: key.controllerIds ? key.controllerIds.map((cid) => slugOf.get(cid) ?? '(deleted)').sort() : null,
      createdBy: createdByName ?? null,
      createdAt: key.createdAt.toISOString(),
      lastUsedAt: key.lastUsedAt?.toISOString() ?? null,
      revokedAt: key.revokedAt?.toISOString() ?? null,
    }))
    .sort((a, b) => Number(a.revokedAt !== null) - Number(b.revokedAt !== null) || b.createdAt.localeCompare(a.createdAt));
}

/** Revokes a key at once (owners only); revoking twice is a 409. */
export async function revokeCiKey(db: Db, member: MemberContext, keyId: string): Promise<void> {
  requireAction(member, 'keys.manage');
  await db.transaction(async (tx) => {
    const [row] = await tx
      .select()
      .from(ciKeys)
      .where(and(eq(ciKeys.id, keyId), eq(ciKeys.workspaceId, member.workspace.id)))
      .for('update');
    if (!row) throw fail.notFound('Key');
    if (row.revokedAt) throw fail.conflict('This key is already revoked.', undefined, 'already_revoked');
    await tx.update(ciKeys).set({ revokedAt: sql`now()` }).where(eq(ciKeys.id, keyId));
    await recordAudit(tx, {
      workspaceId: member.workspace.id,
      actorUserId: member.userId,
      action: 'ci-key.revoked',
      target: `ci-key:${keyId}`,
      detail: { name: row.name, prefix: row.prefix },
    });
  });
  await bumpDownloadCache(db); // refused from the very next request on
}

/** A key that authenticated a request. */
export interface CiKeyPrincipal {
  kind: 'key';
  keyId: string;
  workspaceId: string;
  workspaceSlug: string;
  /** Controller ids the key may read; null for all. */
  controllerIds: string[] | null;
  lastUsedAt: Date | null;
}

/** Reads the bearer token of a request, or null when there is no Authorization: Bearer header. */
export function readBearer(request: Request): string | null {
  return bearerOfHeader(request.headers.get('authorization'));
}

/** The token of an Authorization header value (null without one, '' when it is not a bearer token). */
export function bearerOfHeader(header: string | null | undefined): string | null {
  if (!header) return null;
  const match = /^Bearer\s+(\S+)\s*$/i.exec(header);
  return match ? match[1]! : '';
}

/** Looks a key up by its secret: the key, or null when unknown or revoked. */
export async function authenticateCiKey(db: Db, secret: string): Promise<CiKeyPrincipal | null> {
  if (!secret.startsWith(CI_KEY_PREFIX) || secret.length > 200) return null;
  const [row] = await db
    .select({ key: ciKeys, slug: workspaces.slug })
    .from(ciKeys)
    .innerJoin(workspaces, eq(workspaces.id, ciKeys.workspaceId))
    .where(and(eq(ciKeys.keyHash, ciKeyToHash(secret)), isNull(ciKeys.revokedAt)));
  if (!row) return null;
  return ciKeyRowToPrincipal(row.key, row.slug);
}

/** The principal of a key row. */
export function ciKeyRowToPrincipal(row: CiKeyRow, workspaceSlug: string): CiKeyPrincipal {
  return { kind: 'key', keyId: row.id, workspaceId: row.workspaceId, workspaceSlug, controllerIds: row.controllerIds ?? null, lastUsedAt: row.lastUsedAt };
}

/** Whether a key may read a controller. */
export function keyCanRead(key: Pick<CiKeyPrincipal, 'controllerIds'>, controllerId: string): boolean {
  return key.controllerIds === null || key.controllerIds.includes(controllerId);
}

const recentUse = new Map<string, number>();

/**
 * Records that a key was used (last_used_at plus a `ci-key.used` audit entry), at most once
 * per CI_KEY_USE_INTERVAL_MS per key across all instances (the update is conditional).
 */
export async function recordCiKeyUse(db: Db, key: CiKeyPrincipal, what: { action: string; target: string; detail?: Record<string, unknown> }): Promise<void> {
  const now = Date.now();
  const last = Math.max(recentUse.get(key.keyId) ?? 0, key.lastUsedAt?.getTime() ?? 0);
  if (now - last < CI_KEY_USE_INTERVAL_MS) return;
  recentUse.set(key.keyId, now);
  const cutoff = new Date(now - CI_KEY_USE_INTERVAL_MS);
  const updated = await db
    .update(ciKeys)
    .set({ lastUsedAt: sql`now()` })
    .where(and(eq(ciKeys.id, key.keyId), or(isNull(ciKeys.lastUsedAt), lt(ciKeys.lastUsedAt, cutoff))))
    .returning({ id: ciKeys.id });
  if (updated.length === 0) return; // another request or instance recorded it just now
  await recordAudit(db, {
    workspaceId: key.workspaceId,
    actorKeyId: key.keyId,
    action: 'ci-key.used',
    target: what.target,
    detail: { via: what.action, ...(what.detail ?? {}) },
  });
}

/** Forgets the in-process use throttle (tests). */
export function resetCiKeyUseThrottle(): void {
  recentUse.clear();
}

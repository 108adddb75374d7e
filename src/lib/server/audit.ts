import { and, desc, eq, inArray, isNull, lt, or } from 'drizzle-orm';
import type { Db } from './db';
import { auditLog, memberships, users, type AuditRow } from './schema';

/** Account-level actions that owners also see for their current members. */
export const MEMBER_ACCOUNT_ACTIONS = ['auth.sign-in', 'auth.sign-in-failed', 'auth.password-reset', 'auth.email-verified'];

/** One audit entry to record. */
export type AuditEntry = {
  /** Workspace the action belongs to; null for account-level events (sign-in, sign-up). */
  workspaceId?: string | null;
  /** The person who acted, if any. */
  actorUserId?: string | null;
  /** The CI key that acted, if any. */
  actorKeyId?: string | null;
  /** Dotted verb, e.g. `auth.sign-in`, `member.role-changed`, `revision.created`, `bundle.downloaded`. */
  action: string;
  /** What was acted on, e.g. `user:<id>`, `controller:<slug>`, `door-interlock@r3`. */
  target?: string;
  /** Extra facts (before/after role, label, …); no secrets. */
  detail?: Record<string, unknown>;
};

/** Appends an entry to the audit log (every module uses this, never a direct insert). */
export async function recordAudit(db: Db, entry: AuditEntry): Promise<void> {
  await db.insert(auditLog).values({
    workspaceId: entry.workspaceId ?? null,
    actorUserId: entry.actorUserId ?? null,
    actorKeyId: entry.actorKeyId ?? null,
    action: entry.action,
    target: entry.target ?? '',
    detail: entry.detail ?? {},
  });
}

/** An audit entry with the actor's name, as listed to owners. */
export type AuditListItem = Pick<AuditRow, 'id' | 'action' | 'target' | 'detail' | 'at' | 'actorKeyId'> & {
  actorUserId: string | null;
  actorName: string | null;
  actorEmail: string | null;
  /** Display name of a `user:<id>` target, when that account still exists. */
  targetName: string | null;
};

/**
 * Lists a workspace's audit entries, plus the sign-ins and password resets of its
 * current members, newest first, `limit` at a time before entry id `before`.
 */
export async function listAudit(
  db: Db,
  workspaceId: string,
  options: { before?: number | undefined; limit?: number | undefined } = {},
): Promise<{ items: AuditListItem[]; nextBefore: number | null }> {
  const limit = Math.min(Math.max(options.limit ?? 50, 1), 200);
  const rows = await db
    .select({
      id: auditLog.id,
      action: auditLog.action,
      target: auditLog.target,
      detail: auditLog.detail,
      at: auditLog.at,
      actorKeyId: auditLog.actorKeyId,
      actorUserId: auditLog.actorUserId,
      actorName: users.displayName,
      actorEmail: users.email,
    })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.actorUserId))
    .where(
      and(
        or(
          eq(auditLog.workspaceId, workspaceId),
          and(
            isNull(auditLog.workspaceId),
            inArray(auditLog.action, MEMBER_ACCOUNT_ACTIONS),
            inArray(
              auditLog.actorUserId,
              db.select({ id: memberships.userId }).from(memberships).where(eq(memberships.workspaceId, workspaceId)),
            ),
          ),
        ),
        options.before !== undefined ? lt(auditLog.id, options.before) : undefined,
      ),
    )
    .orderBy(desc(auditLog.id))
    .limit(limit + 1);
  const page = rows.slice(0, limit);
  const targetIds = [...new Set(page.map((r) => /^user:(.+)$/.exec(r.target)?.[1]).filter((id): id is string => !!id))];
  const names = new Map<string, string>();
  if (targetIds.length > 0) {
    for (const u of await db.select({ id: users.id, name: users.displayName }).from(users).where(inArray(users.id, targetIds))) {
      names.set(u.id, u.name);
    }
  }
  const items = page.map((r) => ({ ...r, targetName: names.get(/^user:(.+)$/.exec(r.target)?.[1] ?? '') ?? null }));
  const last = items[items.length - 1];
  return { items, nextBefore: rows.length > limit && last ? last.id : null };
}

/** Lists a user's own account-level entries (sign-ins, resets), newest first. */
export async function listAccountAudit(db: Db, userId: string, limit = 20): Promise<AuditRow[]> {
  return db
    .select()
    .from(auditLog)
    .where(and(eq(auditLog.actorUserId, userId), isNull(auditLog.workspaceId)))
    .orderBy(desc(auditLog.id))
    .limit(limit);
}

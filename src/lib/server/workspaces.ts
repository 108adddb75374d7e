/** Workspaces: create, rename, delete, list; memberships: roles and removal (keeping one owner). */
import { and, asc, count, eq, sql } from 'drizzle-orm';
import { z } from 'zod';
import { recordAudit } from './audit';
import type { Db } from './db';
import { ApiError, fail } from './errors';
import { newId } from './ids';
import type { MemberContext } from './permissions';
import { requireAction } from './permissions';
import { controllers, memberships, ROLES, users, workspaces, type Role, type WorkspaceRow } from './schema';

/** Slugs that would clash with app routes. */
const RESERVED_SLUGS = new Set(['new', 'api', 'admin', 'settings', 'members', 'audit', 'keys', 'outbox', 'auth', 'invites']);

/** A short name used in URLs: lower-case letters, digits and single hyphens, 2 to 40 characters. */
export const slugSchema = z
  .string()
  .trim()
  .toLowerCase()
  .min(2, 'Use at least 2 characters.')
  .max(40, 'Use at most 40 characters.')
  .regex(/^[a-z0-9]+(?:-[a-z0-9]+)*$/, 'Use lower-case letters, digits and single hyphens (not at the ends).')
  .refine((s) => !RESERVED_SLUGS.has(s), 'This short name is reserved.');

/** A workspace name. */
export const workspaceNameSchema = z
  .string()
  .trim()
  .min(2, 'Use at least 2 characters.')
  .max(80, 'Use at most 80 characters.')
  .refine((s) => !/[\u0000-\u001f]/.test(s), 'Names may not contain control characters.');

/** Input to create a workspace; the slug is derived from the name when omitted. */
export const createWorkspaceSchema = z.object({
  name: workspaceNameSchema,
  slug: z.union([slugSchema, z.literal('').transform(() => undefined)]).optional(),
});

/** A role name. */
export const roleSchema = z.enum(ROLES);

/** Turns a name into a slug candidate ("Halvorsen Machine Works" → "halvorsen-machine-works"). */
export function nameToSlug(name: string): string {
  const base = name
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 40)
    .replace(/-+$/g, '');
  return base.length >= 2 ? base : `ws-${base || 'x'}`;
}

/** A workspace in the caller's list, with their role and counts. */
export type WorkspaceListItem = {
  id: string;
  slug: string;
  name: string;
  role: Role;
  members: number;
  controllers: number;
  createdAt: Date;
};

/** Lists the workspaces a user belongs to, by name. */
export async function listWorkspacesForUser(db: Db, userId: string): Promise<WorkspaceListItem[]> {
  const memberCount = db
    .select({ workspaceId: memberships.workspaceId, n: count().as('members_n') })
    .from(memberships)
    .groupBy(memberships.workspaceId)
    .as('mc');
  const controllerCount = db
    .select({ workspaceId: controllers.workspaceId, n: count().as('controllers_n') })
    .from(controllers)
    .where(sql`${controllers.archivedAt} is null`)
    .groupBy(controllers.workspaceId)
    .as('cc');
  const rows = await db
    .select({
      id: workspaces.id,
      slug: workspaces.slug,
      name: workspaces.name,
      role: memberships.role,
      createdAt: workspaces.createdAt,
      members: memberCount.n,
      controllers: controllerCount.n,
    })
    .from(memberships)
    .innerJoin(workspaces, eq(workspaces.id, memberships.workspaceId))
    .leftJoin(memberCount, eq(memberCount.workspaceId, workspaces.id))
    .leftJoin(controllerCount, eq(controllerCount.workspaceId, workspaces.id))
    .where(eq(memberships.userId, userId))
    .orderBy(asc(workspaces.name), asc(workspaces.slug));
  return rows.map((r) => ({ ...r, members: Number(r.members ?? 0), controllers: Number(r.controllers ?? 0) }));
}

/** Requires a confirmed e-mail address for actions that reach other people. */
export function requireVerified(user: { emailVerified: boolean }): void {
  if (!user.emailVerified) {
    throw new ApiError(403, 'email_unverified', 'Confirm your e-mail address first (see the link we sent you).');
  }
}

/** Creates a workspace with the creator as its owner. */
export async function createWorkspace(
  db: Db,
  user: { id: string; emailVerified: boolean },
  input: z.input<typeof createWorkspaceSchema>,
): Promise<WorkspaceRow> {
  const data = createWorkspaceSchema.parse(input);
  requireVerified(user);
  const slug = data.slug ?? (await findFreeSlug(db, nameToSlug(data.name)));
  const id = newId();
  return db.transaction(async (tx) => {
    const [row] = await tx.insert(workspaces).values({ id, slug, name: data.name, createdBy: user.id }).returning();
    if (!row) throw new Error('insert returned no row');
    await tx.insert(memberships).values({ workspaceId: id, userId: user.id, role: 'owner' });
    await recordAudit(tx, { workspaceId: id, actorUserId: user.id, action: 'workspace.created', target: `workspace:${slug}`, detail: { name: data.name } });
    return row;
  });
}

async function findFreeSlug(db: Db, base: string): Promise<string> {
  const candidates = [base, ...Array.from({ length: 8 }, (_, i) => `${base.slice(0, 36)}-${i + 2}`)].filter(
    (s) => !RESERVED_SLUGS.has(s),
  );
  for (const candidate of candidates) {
    const [taken] = await db.select({ id: workspaces.id }).from(workspaces).where(eq(workspaces.slug, candidate));
    if (!taken) return candidate;
  }
  return `${base.slice(0, 30)}-${newId().slice(0, 6)}`;
}

/** Renames a workspace (owners). The slug stays, so links keep working. */
export async function renameWorkspace(db: Db, member: MemberContext, name: string): Promise<WorkspaceRow> {
  requireAction(member, 'workspace.rename');
  const newName = workspaceNameSchema.parse(name);
  const [row] = await db.update(workspaces).set({ name: newName }).where(eq(workspaces.id, member.workspace.id)).returning();
  if (!row) throw fail.notFound('Workspace');
  await recordAudit(db, {
    workspaceId: row.id,
    actorUserId: member.userId,
    action: 'workspace.renamed',
    target: `workspace:${row.slug}`,
    detail: { from: member.workspace.name, to: newName },
  });
  return row;
}

/** Deletes a workspace and everything in it (owners; the slug must be typed to confirm). */
export async function deleteWorkspace(db: Db, member: MemberContext, confirmSlug: string): Promise<void> {
  requireAction(member, 'workspace.delete');
  if (confirmSlug.trim() !== member.workspace.slug) {
    throw fail.badRequest(`Type the short name "${member.workspace.slug}" to confirm.`, 'confirm');
  }
  await db.delete(workspaces).where(eq(workspaces.id, member.workspace.id));
  // The workspace's own log went with it; keep the fact on the actor's account log.
  await recordAudit(db, {
    actorUserId: member.userId,
    action: 'workspace.deleted',
    target: `workspace:${member.workspace.slug}`,
    detail: { name: member.workspace.name },
  });
}

/** A member as listed on the members page. */
export type MemberListItem = { userId: string; email: string; displayName: string; role: Role; since: Date };

/** Lists the members of a workspace, owners first, then by name. */
export async function listMembers(db: Db, workspaceId: string): Promise<MemberListItem[]> {
  const rows = await db
    .select({
      userId: memberships.userId,
      email: users.email,
      displayName: users.displayName,
      role: memberships.role,
      since: memberships.createdAt,
    })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.workspaceId, workspaceId));
  const rank = (r: Role) => ROLES.indexOf(r);
  return rows.sort((a, b) => rank(a.role) - rank(b.role) || a.displayName.localeCompare(b.displayName));
}

/** Lists members holding given roles (e.g. reviewers to request a review from). */
export async function listMembersWithRole(db: Db, workspaceId: string, roles: Role[]): Promise<MemberListItem[]> {
  return (await listMembers(db, workspaceId)).filter((m) => roles.includes(m.role));
}

/**
 * Locks the workspace's memberships for a role change or removal (`next: null`) of one member and
 * returns the member's current role; 404 when not a member, 409 `last_owner` when the change would
 * leave the workspace without an owner.
 */
async function lockMembershipChange(tx: Db, workspaceId: string, userId: string, next: Role | null): Promise<Role> {
  // Serialise owner changes: lock the workspace row, then count owners.
  await tx.execute(sql`select id from ${workspaces} where ${workspaces.id} = ${workspaceId} for update`);
  const owners = await tx
    .select({ userId: memberships.userId })
    .from(memberships)
    .where(and(eq(memberships.workspaceId, workspaceId), eq(memberships.role, 'owner')));
  const [current] = await tx
    .select({ role: memberships.role })
    .from(memberships)
    .where(and(eq(memberships.workspaceId, workspaceId), eq(memberships.userId, userId)));
  if (!current) throw fail.notFound('Member');
  if (current.role === 'owner' && next !== 'owner' && owners.length <= 1) {
    throw fail.conflict('A workspace needs at least one owner. Make someone else owner first.', next === null ? undefined : 'role', 'last_owner');
  }
  return current.role;
}

/** Changes a member's role (owners); the last owner cannot be demoted. */
export async function changeRole(db: Db, member: MemberContext, targetUserId: string, role: Role): Promise<void> {
  requireAction(member, 'members.manage');
  const newRole = roleSchema.parse(role);
  await db.transaction(async (tx) => {
    const from = await lockMembershipChange(tx, member.workspace.id, targetUserId, newRole);
    if (from === newRole) return;
    await tx
      .update(memberships)
      .set({ role: newRole })
      .where(and(eq(memberships.workspaceId, member.workspace.id), eq(memberships.userId, targetUserId)));
    await recordAudit(tx, {
      workspaceId: member.workspace.id,
      actorUserId: member.userId,
      action: 'member.role-changed',
      target: `user:${targetUserId}`,
      detail: { from, to: newRole },
    });
  });
}

/** Removes a member (owners), or lets a member leave (self); the last owner cannot go. */
export async function removeMember(db: Db, member: MemberContext, targetUserId: string): Promise<void> {
  const leaving = targetUserId === member.userId;
  if (!leaving) requireAction(member, 'members.manage');
  await db.transaction(async (tx) => {
    const role = await lockMembershipChange(tx, member.workspace.id, targetUserId, null);
    await tx
      .delete(memberships)
      .where(and(eq(memberships.workspaceId, member.workspace.id), eq(memberships.userId, targetUserId)));
    await recordAudit(tx, {
      workspaceId: member.workspace.id,
      actorUserId: member.userId,
      action: leaving ? 'member.left' : 'member.removed',
      target: `user:${targetUserId}`,
      detail: { role },
    });
  });
}

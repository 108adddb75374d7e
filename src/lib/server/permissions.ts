/**
 * The one place that decides who may do what. Pages and endpoints both call
 * requireMember()/requireAction(); never compare roles elsewhere.
 *
 * owner: everything, plus members, invitations, keys, audit log, workspace settings.
 * editor: create and edit controllers, save revisions, request reviews.
 * reviewer: comment, approve or request changes, publish releases.
 * viewer: read.
 * A non-member gets 404 for every workspace resource (existence is not revealed).
 */
import { and, eq } from 'drizzle-orm';
import type { Db } from './db';
import { fail } from './errors';
import { memberships, workspaces, type Role, type WorkspaceRow } from './schema';

/** Everything a role can be allowed to do. */
export const ACTIONS = [
  'workspace.read',
  'workspace.rename',
  'workspace.delete',
  'members.read',
  'members.manage',
  'audit.read',
  'keys.manage',
  'controller.read',
  'controller.create',
  'controller.edit',
  'controller.archive',
  'revision.save',
  'review.request',
  'review.comment',
  'review.decide',
  'release.publish',
  'bundle.download',
] as const;

/** A permission name. */
export type Action = (typeof ACTIONS)[number];

const ALL: Role[] = ['owner', 'editor', 'reviewer', 'viewer'];

/** The role matrix: which roles may perform each action. */
export const PERMISSIONS: Record<Action, readonly Role[]> = {
  'workspace.read': ALL,
  'workspace.rename': ['owner'],
  'workspace.delete': ['owner'],
  'members.read': ALL,
  'members.manage': ['owner'],
  'audit.read': ['owner'],
  'keys.manage': ['owner'],
  'controller.read': ALL,
  'controller.create': ['owner', 'editor'],
  'controller.edit': ['owner', 'editor'],
  'controller.archive': ['owner', 'editor'],
  'revision.save': ['owner', 'editor'],
  'review.request': ['owner', 'editor'],
  'review.comment': ['owner', 'editor', 'reviewer'],
  'review.decide': ['owner', 'reviewer'],
  'release.publish': ['owner', 'reviewer'],
  'bundle.download': ALL,
};

/** Whether a role may perform an action. */
export function can(role: Role | null | undefined, action: Action): boolean {
  return role ? PERMISSIONS[action].includes(role) : false;
}

/** The actions a role may perform (for rendering controls and for the client). */
export function actionsForRole(role: Role): Action[] {
  return ACTIONS.filter((a) => can(role, a));
}

/** A workspace with the caller's membership. */
export type MemberContext = { workspace: WorkspaceRow; role: Role; userId: string };

/** Loads a workspace by slug for a signed-in member; 401 when anonymous, 404 when not a member or unknown. */
export async function requireMember(db: Db, userId: string | null | undefined, slug: string): Promise<MemberContext> {
  if (!userId) throw fail.unauthenticated();
  const [row] = await db
    .select({ workspace: workspaces, role: memberships.role })
    .from(workspaces)
    .innerJoin(memberships, and(eq(memberships.workspaceId, workspaces.id), eq(memberships.userId, userId)))
    .where(eq(workspaces.slug, slug));
  if (!row) throw fail.notFound('Workspace');
  return { workspace: row.workspace, role: row.role, userId };
}

/** Throws 403 unless the member's role allows the action. */
export function requireAction(member: Pick<MemberContext, 'role'>, action: Action): void {
  if (!can(member.role, action)) throw fail.forbidden(`Your role (${member.role}) does not allow this.`);
}

/** requireMember() then requireAction() in one call. */
export async function requireMemberAction(
  db: Db,
  userId: string | null | undefined,
  slug: string,
  action: Action,
): Promise<MemberContext> {
  const member = await requireMember(db, userId, slug);
  requireAction(member, action);
  return member;
}

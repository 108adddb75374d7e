/** Invitations by e-mail: expiring, single-use links to join a workspace with a role. */
import { and, desc, eq, gt, isNull } from 'drizzle-orm';
import { z } from 'zod';
import { emailSchema, findUserById } from './accounts';
import { recordAudit } from './audit';
import type { Db } from './db';
import { ApiError, fail } from './errors';
import { newId, newToken, sha256Hex } from './ids';
import { sendMail } from './mail';
import { inviteMail } from './mail-templates';
import { requireAction, type MemberContext } from './permissions';
import { consumeLimit } from './rate-limits';
import { invites, memberships, users, workspaces, type InviteRow, type Role } from './schema';
import { requireVerified, roleSchema } from './workspaces';

/** How long an invitation link works. */
export const INVITE_TTL_MS = 7 * 24 * 3600_000;

/** Input to invite someone. */
export const createInviteSchema = z.object({ email: emailSchema, role: roleSchema });

const open = () => and(isNull(invites.acceptedAt), isNull(invites.declinedAt), isNull(invites.revokedAt));

/** An open invitation as listed to owners. */
export type InviteListItem = Pick<InviteRow, 'id' | 'email' | 'role' | 'createdAt' | 'expiresAt'> & {
  invitedByName: string | null;
  expired: boolean;
};

/** Invites an address to the workspace (owners) and e-mails the link; replaces an older open invite. */
export async function createInvite(
  db: Db,
  member: MemberContext,
  inviter: { id: string; displayName: string; emailVerified: boolean },
  input: z.input<typeof createInviteSchema>,
  origin: string,
): Promise<{ invite: InviteRow; url: string }> {
  requireAction(member, 'members.manage');
  requireVerified(inviter);
  const data = createInviteSchema.parse(input);
  await consumeLimit('mailPerUser', inviter.id);
  const [existing] = await db
    .select({ userId: users.id })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.workspaceId, member.workspace.id), eq(users.email, data.email)));
  if (existing) throw fail.conflict('This person is already a member of the workspace.', 'email', 'already_member');
  const token = newToken();
  const expiresAt = new Date(Date.now() + INVITE_TTL_MS);
  const invite = await db.transaction(async (tx) => {
    await tx
      .update(invites)
      .set({ revokedAt: new Date() })
      .where(and(eq(invites.workspaceId, member.workspace.id), eq(invites.email, data.email), open()));
    const [row] = await tx
      .insert(invites)
      .values({
        id: newId(),
        workspaceId: member.workspace.id,
        email: data.email,
        role: data.role,
        tokenHash: sha256Hex(token),
        invitedBy: inviter.id,
        expiresAt,
      })
      .returning();
    if (!row) throw new Error('insert returned no row');
    await recordAudit(tx, {
      workspaceId: member.workspace.id,
      actorUserId: inviter.id,
      action: 'member.invited',
      target: `email:${data.email}`,
      detail: { role: data.role },
    });
    return row;
  });
  const url = `${origin}/invites/${token}`;
  await sendMail(
    db,
    inviteMail(data.email, { inviterName: inviter.displayName, workspaceName: member.workspace.name, role: data.role, url, expiresAt }),
  );
  return { invite, url };
}

/** Lists a workspace's open invitations (owners), newest first. */
export async function listOpenInvites(db: Db, member: MemberContext): Promise<InviteListItem[]> {
  requireAction(member, 'members.manage');
  const rows = await db
    .select({
      id: invites.id,
      email: invites.email,
      role: invites.role,
      createdAt: invites.createdAt,
      expiresAt: invites.expiresAt,
      invitedByName: users.displayName,
    })
    .from(invites)
    .leftJoin(users, eq(users.id, invites.invitedBy))
    .where(and(eq(invites.workspaceId, member.workspace.id), open()))
    .orderBy(desc(invites.createdAt));
  const now = Date.now();
  return rows.map((r) => ({ ...r, expired: r.expiresAt.getTime() <= now }));
}

/** Withdraws an open invitation (owners). */
export async function revokeInvite(db: Db, member: MemberContext, inviteId: string): Promise<void> {
  requireAction(member, 'members.manage');
  const [row] = await db
    .update(invites)
    .set({ revokedAt: new Date() })
    .where(and(eq(invites.id, inviteId), eq(invites.workspaceId, member.workspace.id), open()))
    .returning();
  if (!row) throw fail.notFound('Invitation');
  await recordAudit(db, {
    workspaceId: member.workspace.id,
    actorUserId: member.userId,
    action: 'member.invite-revoked',
    target: `email:${row.email}`,
  });
}

/** What an invitation link shows before it is answered. */
export type InvitePreview = {
  email: string;
  role: Role;
  workspaceName: string;
  workspaceSlug: string;
  invitedByName: string | null;
  expiresAt: Date;
  state: 'open' | 'expired' | 'accepted' | 'declined' | 'revoked';
};

/** Looks up an invitation by its link token; null when the token is unknown. */
export async function previewInvite(db: Db, token: string): Promise<InvitePreview | null> {
  const [row] = await db
    .select({ invite: invites, workspaceName: workspaces.name, workspaceSlug: workspaces.slug, invitedByName: users.displayName })
    .from(invites)
    .innerJoin(workspaces, eq(workspaces.id, invites.workspaceId))
    .leftJoin(users, eq(users.id, invites.invitedBy))
    .where(eq(invites.tokenHash, sha256Hex(token)));
  if (!row) return null;
  const i = row.invite;
  const state = i.acceptedAt
    ? 'accepted'
    : i.declinedAt
      ? 'declined'
      : i.revokedAt
        ? 'revoked'
        : i.expiresAt.getTime() <= Date.now()
          ? 'expired'
          : 'open';
  return {
    email: i.email,
    role: i.role,
    workspaceName: row.workspaceName,
    workspaceSlug: row.workspaceSlug,
    invitedByName: row.invitedByName,
    expiresAt: i.expiresAt,
    state,
  };
}

function unusable(): ApiError {
  return new ApiError(404, 'invalid_invite', 'This invitation is unknown, was already answered, was withdrawn, or has expired.');
}

/**
 * Accepts an invitation for the signed-in user, whose address must be the invited one.
 * Answering the mailed link also confirms that address. Returns the workspace slug.
 */
export async function acceptInvite(db: Db, userId: string, token: string): Promise<{ slug: string; role: Role }> {
  const user = await findUserById(db, userId);
  if (!user) throw fail.unauthenticated();
  return db.transaction(async (tx) => {
    const [invite] = await tx
      .select()
      .from(invites)
      .where(and(eq(invites.tokenHash, sha256Hex(token)), open(), gt(invites.expiresAt, new Date())))
      .for('update');
    if (!invite) throw unusable();
    if (invite.email !== user.email) {
      throw new ApiError(
        403,
        'wrong_account',
        `This invitation is for ${invite.email}, but you are signed in as ${user.email}. Sign in with the invited address.`,
      );
    }
    const [ws] = await tx.select().from(workspaces).where(eq(workspaces.id, invite.workspaceId));
    if (!ws) throw unusable();
    const [already] = await tx
      .select({ role: memberships.role })
      .from(memberships)
      .where(and(eq(memberships.workspaceId, ws.id), eq(memberships.userId, userId)));
    await tx.update(invites).set({ acceptedAt: new Date(), acceptedBy: userId }).where(eq(invites.id, invite.id));
    if (!user.emailVerifiedAt) await tx.update(users).set({ emailVerifiedAt: new Date() }).where(eq(users.id, userId));
    if (already) return { slug: ws.slug, role: already.role };
    await tx.insert(memberships).values({ workspaceId: ws.id, userId, role: invite.role });
    await recordAudit(tx, {
      workspaceId: ws.id,
      actorUserId: userId,
      action: 'member.joined',
      target: `user:${userId}`,
      detail: { role: invite.role, via: 'invitation' },
    });
    return { slug: ws.slug, role: invite.role };
  });
}

/** Declines an invitation; the link token alone is enough (no account needed). */
export async function declineInvite(db: Db, token: string, userId: string | null): Promise<void> {
  const [row] = await db
    .update(invites)
    .set({ declinedAt: new Date() })
    .where(and(eq(invites.tokenHash, sha256Hex(token)), open(), gt(invites.expiresAt, new Date())))
    .returning();
  if (!row) throw unusable();
  await recordAudit(db, {
    workspaceId: row.workspaceId,
    actorUserId: userId,
    action: 'member.invite-declined',
    target: `email:${row.email}`,
  });
}

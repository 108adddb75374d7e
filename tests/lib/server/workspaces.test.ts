import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { signUp, verifyEmail, type AccountView } from '../../../src/lib/server/accounts';
import { listAudit } from '../../../src/lib/server/audit';
import type { DatabaseHandle } from '../../../src/lib/server/db';
import { toApiError } from '../../../src/lib/server/errors';
import { acceptInvite, createInvite, declineInvite, listOpenInvites, previewInvite, revokeInvite } from '../../../src/lib/server/invites';
import { ACTIONS, can, PERMISSIONS, requireMember } from '../../../src/lib/server/permissions';
import { invites, users, type Role } from '../../../src/lib/server/schema';
import {
  changeRole,
  createWorkspace,
  deleteWorkspace,
  listMembers,
  listWorkspacesForUser,
  nameToSlug,
  removeMember,
  renameWorkspace,
} from '../../../src/lib/server/workspaces';
import { BACKENDS } from './support/backends';
import { catchRejection } from './support/errors';
import { lastMailTo, linkIn, tokenOf } from './support/mail';

const ORIGIN = 'http://127.0.0.1:4999';

describe('role matrix', () => {
  // The matrix of issue 2: owner all; editor edits controllers; reviewer reviews and approves; viewer reads.
  const expected: Record<Role, string[]> = {
    owner: [...ACTIONS],
    editor: ['workspace.read', 'members.read', 'controller.read', 'controller.create', 'controller.edit', 'controller.archive', 'revision.save', 'review.request', 'review.comment', 'bundle.download'],
    reviewer: ['workspace.read', 'members.read', 'controller.read', 'review.comment', 'review.decide', 'release.publish', 'bundle.download'],
    viewer: ['workspace.read', 'members.read', 'controller.read', 'bundle.download'],
  };
  it.each(Object.entries(expected))('%s may do exactly its actions', (role, allowed) => {
    expect(ACTIONS.filter((a) => can(role as Role, a))).toEqual(ACTIONS.filter((a) => allowed.includes(a)));
  });
  it('nobody without a role may do anything', () => {
    expect(ACTIONS.some((a) => can(null, a))).toBe(false);
    expect(Object.keys(PERMISSIONS).sort()).toEqual([...ACTIONS].sort());
  });
});

describe('nameToSlug', () => {
  it('derives URL-safe short names', () => {
    expect(nameToSlug('Halvorsen Machine Works')).toBe('halvorsen-machine-works');
    expect(nameToSlug('  Ünïcode & Co. ')).toBe('unicode-co');
    expect(nameToSlug('!')).toBe('ws-x');
  });
});

describe.each(BACKENDS)('workspaces and members on $name', (backend) => {
  let handle: DatabaseHandle;
  const people: Record<string, AccountView & { emailVerified: boolean }> = {};
  let n = 0;

  async function person(key: string, verify = true) {
    const email = `${key}@example.test`;
    const { user } = await signUp(handle.db, { email, password: 'long enough secret', displayName: key }, { origin: ORIGIN, clientKey: `ws-${backend.name}-${++n}` });
    if (verify) {
      const token = tokenOf(linkIn((await lastMailTo(handle.db, email)).text, '/auth/verify/'));
      await verifyEmail(handle.db, token);
    }
    people[key] = { ...user, emailVerified: verify };
    return people[key]!;
  }

  beforeAll(async () => {
    delete process.env.SMTP_URL;
    handle = await backend.open();
    await person('olga');
    await person('ed');
    await person('rita');
    await person('vic');
    await person('nora');
    await person('unverified', false);
  });
  afterAll(async () => {
    await handle?.close();
  });

  it('creates a workspace with the creator as owner and a derived slug; clashes are 409', async () => {
    const ws = await createWorkspace(handle.db, people.olga!, { name: 'Line 3 Controls' });
    expect(ws.slug).toBe('line-3-controls');
    const again = await createWorkspace(handle.db, people.olga!, { name: 'Line 3 Controls' });
    expect(again.slug).toBe('line-3-controls-2');
    const clash = await catchRejection(createWorkspace(handle.db, people.olga!, { name: 'Other', slug: 'line-3-controls' }));
    expect(clash.status).toBe(409);
    expect(clash.field).toBe('slug');
    const reserved = await catchRejection(createWorkspace(handle.db, people.olga!, { name: 'Other', slug: 'api' }));
    expect(reserved.status).toBe(400);
    const list = await listWorkspacesForUser(handle.db, people.olga!.id);
    expect(list.map((w) => [w.slug, w.role, w.members])).toEqual([
      ['line-3-controls', 'owner', 1],
      ['line-3-controls-2', 'owner', 1],
    ]);
  });

  it('requires a confirmed address to create a workspace', async () => {
    const error = await catchRejection(createWorkspace(handle.db, people.unverified!, { name: 'Nope' }));
    expect(error.status).toBe(403);
    expect(error.code).toBe('email_unverified');
  });

  it('invites by e-mail with a single-use link; the invitee accepts and gets the role', async () => {
    const owner = await requireMember(handle.db, people.olga!.id, 'line-3-controls');
    const roles: [string, Role][] = [['ed', 'editor'], ['rita', 'reviewer'], ['vic', 'viewer']];
    for (const [key, role] of roles) {
      await createInvite(handle.db, owner, people.olga!, { email: `${key.toUpperCase()}@example.test`, role }, ORIGIN);
      const mail = await lastMailTo(handle.db, `${key}@example.test`);
      expect(mail.subject).toContain('invited you to Line 3 Controls');
      const token = tokenOf(linkIn(mail.text, '/invites/'));
      expect((await previewInvite(handle.db, token))?.state).toBe('open');
      expect(await acceptInvite(handle.db, people[key]!.id, token)).toEqual({ slug: 'line-3-controls', role });
      const reused = await catchRejection(acceptInvite(handle.db, people[key]!.id, token));
      expect(reused.status).toBe(404);
      expect((await previewInvite(handle.db, token))?.state).toBe('accepted');
    }
    const members = await listMembers(handle.db, owner.workspace.id);
    expect(members.map((m) => [m.displayName, m.role])).toEqual([
      ['olga', 'owner'],
      ['ed', 'editor'],
      ['rita', 'reviewer'],
      ['vic', 'viewer'],
    ]);
    const dup = await catchRejection(createInvite(handle.db, owner, people.olga!, { email: 'ed@example.test', role: 'viewer' }, ORIGIN));
    expect(dup.status).toBe(409);
  });

  it('refuses an invite accepted by another account, expired, or withdrawn; a decline needs only the link', async () => {
    const owner = await requireMember(handle.db, people.olga!.id, 'line-3-controls');
    await createInvite(handle.db, owner, people.olga!, { email: 'nora@example.test', role: 'editor' }, ORIGIN);
    const first = tokenOf(linkIn((await lastMailTo(handle.db, 'nora@example.test')).text, '/invites/'));
    const wrong = await catchRejection(acceptInvite(handle.db, people.ed!.id, first));
    expect(wrong.status).toBe(403);
    expect(wrong.code).toBe('wrong_account');
    // A new invite to the same address replaces the old link.
    await createInvite(handle.db, owner, people.olga!, { email: 'nora@example.test', role: 'viewer' }, ORIGIN);
    const second = tokenOf(linkIn((await lastMailTo(handle.db, 'nora@example.test')).text, '/invites/'));
    expect((await previewInvite(handle.db, first))?.state).toBe('revoked');
    const open = await listOpenInvites(handle.db, owner);
    expect(open.map((i) => [i.email, i.role])).toEqual([['nora@example.test', 'viewer']]);
    await handle.db.update(invites).set({ expiresAt: new Date(Date.now() - 1) }).where(eq(invites.email, 'nora@example.test'));
    expect((await previewInvite(handle.db, second))?.state).toBe('expired');
    expect((await catchRejection(acceptInvite(handle.db, people.nora!.id, second))).status).toBe(404);
    const third = await createInvite(handle.db, owner, people.olga!, { email: 'nora@example.test', role: 'viewer' }, ORIGIN);
    await revokeInvite(handle.db, owner, third.invite.id);
    expect((await catchRejection(acceptInvite(handle.db, people.nora!.id, tokenOf(third.url)))).status).toBe(404);
    const fourth = await createInvite(handle.db, owner, people.olga!, { email: 'nora@example.test', role: 'viewer' }, ORIGIN);
    await declineInvite(handle.db, tokenOf(fourth.url), null);
    expect((await previewInvite(handle.db, tokenOf(fourth.url)))?.state).toBe('declined');
    expect(await requireMember(handle.db, people.nora!.id, 'line-3-controls').catch((e: unknown) => toApiError(e).status)).toBe(404);
  });

  it('accepting an invite confirms the address of an unconfirmed account', async () => {
    const owner = await requireMember(handle.db, people.olga!.id, 'line-3-controls-2');
    const { url } = await createInvite(handle.db, owner, people.olga!, { email: 'unverified@example.test', role: 'viewer' }, ORIGIN);
    await acceptInvite(handle.db, people.unverified!.id, tokenOf(url));
    const [row] = await handle.db.select().from(users).where(eq(users.id, people.unverified!.id));
    expect(row?.emailVerifiedAt).toBeInstanceOf(Date);
  });

  it('hides workspaces from non-members with 404 and refuses roles without the action with 403', async () => {
    const missing = await catchRejection(requireMember(handle.db, people.nora!.id, 'line-3-controls'));
    expect(missing.status).toBe(404);
    const unknown = await catchRejection(requireMember(handle.db, people.olga!.id, 'no-such-workspace'));
    expect(unknown.status).toBe(404);
    const anonymous = await catchRejection(requireMember(handle.db, null, 'line-3-controls'));
    expect(anonymous.status).toBe(401);
    for (const key of ['ed', 'rita', 'vic']) {
      const m = await requireMember(handle.db, people[key]!.id, 'line-3-controls');
      expect((await catchRejection(renameWorkspace(handle.db, m, 'Hijacked'))).status).toBe(403);
      expect((await catchRejection(changeRole(handle.db, m, people[key]!.id, 'owner'))).status).toBe(403);
      expect((await catchRejection(createInvite(handle.db, m, people[key]!, { email: 'x@example.test', role: 'owner' }, ORIGIN))).status).toBe(403);
      expect((await catchRejection(deleteWorkspace(handle.db, m, 'line-3-controls'))).status).toBe(403);
      expect((await catchRejection(removeMember(handle.db, m, people.olga!.id))).status).toBe(403);
    }
  });

  it('changes roles and removes members but always keeps one owner', async () => {
    const owner = await requireMember(handle.db, people.olga!.id, 'line-3-controls');
    const last = await catchRejection(changeRole(handle.db, owner, people.olga!.id, 'editor'));
    expect(last.status).toBe(409);
    expect(last.code).toBe('last_owner');
    expect((await catchRejection(removeMember(handle.db, owner, people.olga!.id))).code).toBe('last_owner');
    await changeRole(handle.db, owner, people.ed!.id, 'owner');
    await changeRole(handle.db, owner, people.olga!.id, 'editor');
    const ed = await requireMember(handle.db, people.ed!.id, 'line-3-controls');
    expect(ed.role).toBe('owner');
    await changeRole(handle.db, ed, people.olga!.id, 'owner');
    await removeMember(handle.db, ed, people.vic!.id);
    expect((await catchRejection(requireMember(handle.db, people.vic!.id, 'line-3-controls'))).status).toBe(404);
    const rita = await requireMember(handle.db, people.rita!.id, 'line-3-controls');
    await removeMember(handle.db, rita, people.rita!.id); // leaving is allowed for every role
    expect((await catchRejection(changeRole(handle.db, ed, 'nobody', 'viewer'))).status).toBe(404);
  });

  it('renames (slug kept), audits membership changes, and deletes with the slug typed', async () => {
    const owner = await requireMember(handle.db, people.olga!.id, 'line-3-controls');
    const renamed = await renameWorkspace(handle.db, owner, 'Line 3 Controls (north)');
    expect(renamed.slug).toBe('line-3-controls');
    const { items } = await listAudit(handle.db, owner.workspace.id, { limit: 200 });
    const actions = items.map((i) => i.action);
    for (const a of ['workspace.created', 'member.invited', 'member.joined', 'member.role-changed', 'member.removed', 'member.left', 'member.invite-declined', 'member.invite-revoked', 'workspace.renamed', 'auth.email-verified']) {
      expect(actions).toContain(a);
    }
    const roleChange = items.find((i) => i.action === 'member.role-changed');
    expect(roleChange?.detail).toMatchObject({ from: expect.any(String), to: expect.any(String) });
    expect(roleChange?.actorName).toBeTruthy();
    // Paging: newest first, no overlap.
    const page1 = await listAudit(handle.db, owner.workspace.id, { limit: 3 });
    const page2 = await listAudit(handle.db, owner.workspace.id, { limit: 3, before: page1.nextBefore ?? undefined });
    expect(page1.items.length).toBe(3);
    expect(page2.items[0]!.id).toBeLessThan(page1.items[2]!.id);
    const wrong = await catchRejection(deleteWorkspace(handle.db, owner, 'line-3'));
    expect(wrong.status).toBe(400);
    expect(wrong.field).toBe('confirm');
    await deleteWorkspace(handle.db, owner, 'line-3-controls');
    expect((await catchRejection(requireMember(handle.db, people.olga!.id, 'line-3-controls'))).status).toBe(404);
  });
});

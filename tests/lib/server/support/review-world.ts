/**
 * A small invented world for the review, release, key and download tests: the workspace of
 * "Brightwater Hoists" with one member per role, an outsider, and controllers made from our
 * guard-interlock starter (r1) plus an edited r2. Also a way to call endpoint handlers
 * directly with a chosen caller (session user, CI key or nobody).
 */
import type { APIContext, APIRoute } from 'astro';
import { createCiKey } from '../../../../src/lib/server/ci-keys';
import { createController } from '../../../../src/lib/server/controllers';
import type { Db } from '../../../../src/lib/server/db';
import type { Backend } from './backends';
import { newId } from '../../../../src/lib/server/ids';
import { requireMember, type MemberContext } from '../../../../src/lib/server/permissions';
import { createRevision } from '../../../../src/lib/server/revisions';
import { memberships, users, workspaces, type ControllerRow, type Role } from '../../../../src/lib/server/schema';
import type { SessionUser } from '../../../../src/lib/server/session';

/** Who calls an endpoint in a test. */
export type Caller = 'owner' | 'editor' | 'reviewer' | 'viewer' | 'outsider' | 'anonymous' | 'key';

/** Every caller of the role matrix. */
export const CALLERS: Caller[] = ['owner', 'editor', 'reviewer', 'viewer', 'outsider', 'anonymous', 'key'];

/** The test world. */
export interface World {
  db: Db;
  slug: string;
  users: Record<Exclude<Caller, 'anonymous' | 'key'>, SessionUser>;
  members: Record<Role, MemberContext>;
  /** A CI key of the workspace (every controller). */
  key: string;
  keyId: string;
  /** Closes (and with PostgreSQL drops) the world's database. */
  close: () => Promise<void>;
}

async function addUser(db: Db, name: string, email: string): Promise<SessionUser> {
  const id = newId();
  await db.insert(users).values({ id, email, passwordHash: 'not-a-real-hash', displayName: name, emailVerifiedAt: new Date() });
  return { id, email, displayName: name, emailVerified: true };
}

/** Builds the workspace, its members (one per role), an outsider with a workspace of their own, and a CI key. */
async function buildWorld(db: Db, slug = 'brightwater'): Promise<Omit<World, 'close'>> {
  const people = {
    owner: await addUser(db, 'Olga Owner', `owner@${slug}.test`),
    editor: await addUser(db, 'Emil Editor', `editor@${slug}.test`),
    reviewer: await addUser(db, 'Rhea Reviewer', `reviewer@${slug}.test`),
    viewer: await addUser(db, 'Vik Viewer', `viewer@${slug}.test`),
    outsider: await addUser(db, 'Otto Outsider', `outsider@${slug}.test`),
  };
  const wsId = newId();
  await db.insert(workspaces).values({ id: wsId, slug, name: 'Brightwater Hoists', createdBy: people.owner.id });
  for (const role of ['owner', 'editor', 'reviewer', 'viewer'] as const) {
    await db.insert(memberships).values({ workspaceId: wsId, userId: people[role].id, role });
  }
  const otherId = newId();
  await db.insert(workspaces).values({ id: otherId, slug: `${slug}-other`, name: 'Elsewhere Cranes', createdBy: people.outsider.id });
  await db.insert(memberships).values({ workspaceId: otherId, userId: people.outsider.id, role: 'owner' });
  const members = {} as Record<Role, MemberContext>;
  for (const role of ['owner', 'editor', 'reviewer', 'viewer'] as const) members[role] = await requireMember(db, people[role].id, slug);
  const { secret, key } = await createCiKey(db, members.owner, { name: 'Line 2 firmware build' });
  return { db, slug, users: people, members, key: secret, keyId: key.id };
}

/** Opens a fresh database on `backend` and builds the world in it; `close()` closes (and drops) it. */
export async function openWorld(backend: Backend, slug?: string): Promise<World> {
  const handle = await backend.open();
  return { ...(await buildWorld(handle.db, slug)), close: () => handle.close() };
}

/** Where e-mailed links of the world point (reviews, verdicts). */
export function mailLinkOf(world: World): { origin: string; workspaceSlug: string } {
  return { origin: 'http://127.0.0.1:4321', workspaceSlug: world.slug };
}

/** The r2 edit of the starter: closing the guard while start is still held now waits in `open_held` (so `blocked` becomes unreachable). */
export function editStarterSource(r1Source: string): string {
  const lines = r1Source.split('\n');
  const i = lines.findIndex((l) => /^\s+open_held\s/.test(l));
  if (i < 0) throw new Error('starter source has no open_held row');
  lines[i] = lines[i]!.replace('blocked/0', 'open_held/0');
  return lines.join('\n');
}

/** A new controller (starter r1 by the editor) with an edited r2; returns the controller row after r2. */
export async function addController(world: World, name: string, options: { revisions?: 1 | 2 } = {}): Promise<ControllerRow> {
  const c = await createController(world.db, { workspaceId: world.members.owner.workspace.id, name, author: world.users.editor.id, kind: 'starter' });
  if ((options.revisions ?? 2) === 2) {
    const { getRevision } = await import('../../../../src/lib/server/revisions');
    const r1 = await getRevision(world.db, c.id, 1);
    await createRevision(world.db, { controllerId: c.id, baseNumber: 1, source: editStarterSource(r1!.source), message: 'open_held: closing the guard with start held waits for a release', author: world.users.editor.id });
  }
  const { requireController } = await import('../../../../src/lib/server/controllers');
  return requireController(world.db, world.members.owner.workspace.id, c.slug);
}

/** Options of callEndpoint. */
export interface CallOptions {
  method?: string;
  params: Record<string, string>;
  query?: Record<string, string>;
  body?: unknown;
  headers?: Record<string, string>;
  /** Use this bearer token instead of the world's key (e.g. a revoked one). */
  bearer?: string;
}

/** Calls an endpoint handler as `caller`, the way the middleware would set up its context. */
export async function callEndpoint(world: World, handler: APIRoute | undefined, caller: Caller, options: CallOptions): Promise<Response> {
  if (!handler) throw new Error('no handler for this method');
  const url = new URL('http://127.0.0.1:4321/api/test');
  for (const [k, v] of Object.entries(options.query ?? {})) url.searchParams.set(k, v);
  const headers = new Headers(options.headers ?? {});
  if (caller === 'key' || options.bearer !== undefined) headers.set('authorization', `Bearer ${options.bearer ?? world.key}`);
  let body: string | undefined;
  if (options.body !== undefined) {
    body = JSON.stringify(options.body);
    headers.set('content-type', 'application/json');
  }
  const request = new Request(url, { method: options.method ?? (options.body !== undefined ? 'POST' : 'GET'), headers, body });
  const user = caller === 'anonymous' || caller === 'key' ? null : world.users[caller];
  const ctx = {
    request,
    url,
    params: options.params,
    locals: { db: world.db, user, session: null, demo: false, outbox: true },
    clientAddress: '127.0.0.1',
  } as unknown as APIContext;
  return handler(ctx);
}

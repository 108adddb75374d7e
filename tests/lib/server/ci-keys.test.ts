import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { authenticateCiKey, createCiKey, listCiKeys, readBearer, revokeCiKey } from '../../../src/lib/server/ci-keys';
import * as s from '../../../src/lib/server/schema';
import * as openapiRoute from '../../../src/pages/api/v1/openapi.json';
import * as keyRoute from '../../../src/pages/api/v1/workspaces/[workspace]/keys/[key]';
import * as keysRoute from '../../../src/pages/api/v1/workspaces/[workspace]/keys/index';
import * as bundleRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/revisions/[rev]/bundle';
import * as compareRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/compare';
import { BACKENDS } from './support/backends';
import { addController, openWorld, callEndpoint, CALLERS, type Caller, type World } from './support/review-world';

describe('bearer header', () => {
  it('reads Authorization: Bearer and nothing else', () => {
    const req = (h?: string) => new Request('http://x/', h ? { headers: { authorization: h } } : {});
    expect(readBearer(req())).toBeNull();
    expect(readBearer(req('Bearer qk_abc'))).toBe('qk_abc');
    expect(readBearer(req('bearer   qk_abc '))).toBe('qk_abc');
    expect(readBearer(req('Basic dXNlcjpwYXNz'))).toBe('');
  });
});

describe.each(BACKENDS)('CI keys on $name', (backend) => {
  let world: World;
  let door: s.ControllerRow;
  let press: s.ControllerRow;
  beforeAll(async () => {
    world = await openWorld(backend);
    door = await addController(world, 'Door interlock', { revisions: 1 });
    press = await addController(world, 'Two-hand press', { revisions: 1 });
  });
  afterAll(async () => {
    await world?.close();
  });

  const download = (controller: string, bearer: string) =>
    callEndpoint(world, bundleRoute.GET, 'anonymous', { params: { workspace: world.slug, controller, rev: 'latest' }, query: { target: 'c' }, bearer });

  it('shows a key once, stores only its sha256, and lists it without the secret', async () => {
    const { key, secret } = await createCiKey(world.db, world.members.owner, { name: 'Nightly build' });
    expect(secret).toMatch(/^qk_[a-z2-9]{52}$/);
    const [row] = await world.db.select().from(s.ciKeys).where(eq(s.ciKeys.id, key.id));
    expect(row!.keyHash).toBe(createHash('sha256').update(secret).digest('hex'));
    expect(JSON.stringify(row)).not.toContain(secret);
    expect(key.prefix).toBe(secret.slice(0, 11));
    const listed = await listCiKeys(world.db, world.members.owner);
    expect(JSON.stringify(listed)).not.toContain(secret);
    expect(listed.find((k) => k.id === key.id)).toMatchObject({ name: 'Nightly build', controllers: null, revokedAt: null, lastUsedAt: null });
    expect(await authenticateCiKey(world.db, secret)).toMatchObject({ keyId: key.id, controllerIds: null });
    expect(await authenticateCiKey(world.db, `${secret}x`)).toBeNull();
  });

  it('narrows a key to some controllers: others read as 404', async () => {
    const { secret } = await createCiKey(world.db, world.members.owner, { name: 'Press only', controllers: [press.slug] });
    expect((await download(press.slug, secret)).status).toBe(200);
    expect((await download(door.slug, secret)).status).toBe(404);
    await expect(createCiKey(world.db, world.members.owner, { name: 'Typo', controllers: ['no-such'] })).rejects.toMatchObject({ status: 400, field: 'controllers' });
  });

  it('refuses a revoked key at once, and records last use', async () => {
    const { key, secret } = await createCiKey(world.db, world.members.owner, { name: 'To revoke' });
    expect((await download(door.slug, secret)).status).toBe(200);
    const [used] = await world.db.select().from(s.ciKeys).where(eq(s.ciKeys.id, key.id));
    expect(used!.lastUsedAt).toBeInstanceOf(Date);
    await revokeCiKey(world.db, world.members.owner, key.id);
    const refused = await download(door.slug, secret);
    expect(refused.status).toBe(404);
    expect((await callEndpoint(world, compareRoute.GET, 'anonymous', { params: { workspace: world.slug, controller: door.slug }, query: { from: '1', to: '1' }, bearer: secret })).status).toBe(404);
    await expect(revokeCiKey(world.db, world.members.owner, key.id)).rejects.toMatchObject({ status: 409 });
    expect((await listCiKeys(world.db, world.members.owner)).at(-1)).toMatchObject({ id: key.id, revokedAt: expect.any(String) });
    const audit = (await world.db.select({ action: s.auditLog.action }).from(s.auditLog).where(eq(s.auditLog.target, `ci-key:${key.id}`))).map((a) => a.action);
    expect(audit).toEqual(expect.arrayContaining(['ci-key.created', 'ci-key.revoked']));
  });

  it('does not accept a key of another workspace, nor a key as a session for writes', async () => {
    const otherOwner = { ...world.members.owner, workspace: { ...world.members.owner.workspace } };
    const [other] = await world.db.select().from(s.workspaces).where(eq(s.workspaces.slug, `${world.slug}-other`));
    otherOwner.workspace = other!;
    otherOwner.userId = world.users.outsider.id;
    const { secret } = await createCiKey(world.db, otherOwner, { name: 'Elsewhere' });
    expect((await download(door.slug, secret)).status).toBe(404);
    const write = await callEndpoint(world, keysRoute.POST, 'key', { params: { workspace: world.slug }, body: { name: 'sneaky' } });
    expect(write.status).toBe(401);
  });

  const LIST: Record<Caller, number> = { owner: 200, editor: 403, reviewer: 403, viewer: 403, outsider: 404, anonymous: 401, key: 401 };
  const CREATE: Record<Caller, number> = { ...LIST, owner: 201 };
  const REVOKE: Record<Caller, number> = { ...LIST, owner: 204 };
  it.each(CALLERS)('role matrix: %s listing, creating and revoking keys', async (caller) => {
    const params = { workspace: world.slug };
    expect((await callEndpoint(world, keysRoute.GET, caller, { params })).status).toBe(LIST[caller]);
    const created = await callEndpoint(world, keysRoute.POST, caller, { params, body: { name: `by ${caller}` } });
    expect(created.status).toBe(CREATE[caller]);
    if (CREATE[caller] === 201) expect(((await created.json()) as { secret: string }).secret).toMatch(/^qk_/);
    const victim = await createCiKey(world.db, world.members.owner, { name: `victim for ${caller}` });
    const revoked = await callEndpoint(world, keyRoute.DELETE, caller, { method: 'DELETE', params: { ...params, key: victim.key.id } });
    expect(revoked.status).toBe(REVOKE[caller]);
    expect((await download(door.slug, victim.secret)).status).toBe(REVOKE[caller] === 204 ? 404 : 200);
  });

  it.each(CALLERS)('role matrix: %s reading the OpenAPI document (public)', async (caller) => {
    const r = await callEndpoint(world, openapiRoute.GET, caller, { params: {} });
    expect(r.status).toBe(200);
    const doc = (await r.json()) as { openapi: string; paths: Record<string, Record<string, { parameters?: { name: string; schema: { enum?: string[] } }[] }>> };
    expect(doc.openapi).toBe('3.0.3');
    const bundle = doc.paths['/api/v1/workspaces/{workspace}/controllers/{controller}/revisions/{rev}/bundle']!.get!;
    // Generated from the same zod schema the endpoint parses its query with.
    expect(bundle.parameters!.find((p) => p.name === 'target')!.schema.enum).toEqual([...s.TARGETS]);
    expect(Object.keys(doc.paths)).toEqual(expect.arrayContaining(['/api/v1/workspaces/{workspace}/controllers/{controller}/compare', '/api/v1/workspaces/{workspace}/keys']));
  });
});

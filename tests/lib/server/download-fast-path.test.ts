import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { createCiKey, resetCiKeyUseThrottle, revokeCiKey } from '../../../src/lib/server/ci-keys';
import { createDownloadFastPath } from '../../../src/lib/server/download-fast-path';
import * as s from '../../../src/lib/server/schema';
import * as bundleRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/revisions/[rev]/bundle';
import * as checksumRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/revisions/[rev]/bundle.sha256';
import { BACKENDS } from './support/backends';
import { addController, openWorld, callEndpoint, type World } from './support/review-world';

/** What the test server answers when the fast path passes a request on. */
const PASSED_ON = 599;

type Answer = { status: number; headers: Record<string, string>; body: Buffer };

describe.each(BACKENDS)('download fast path on $name', (backend) => {
  let world: World;
  let door: s.ControllerRow;
  let server: http.Server;
  let origin: string;

  beforeAll(async () => {
    world = await openWorld(backend, 'fastlane');
    door = await addController(world, 'Door interlock');
    const fastPath = createDownloadFastPath(async () => world.db);
    server = http.createServer((req, res) => {
      if (fastPath(req, res)) return;
      res.writeHead(PASSED_ON);
      res.end();
    });
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    origin = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  });
  afterAll(async () => {
    await new Promise((resolve) => server?.close(resolve));
    await world?.close();
  });

  const path = (rev: string, file = 'bundle') => `/api/v1/workspaces/${world.slug}/controllers/${door.slug}/revisions/${rev}/${file}`;

  /** A request to the fast path over real HTTP (node's client, so no header is added or dropped). */
  function fetchFast(url: string, headers: Record<string, string>, method = 'GET'): Promise<Answer> {
    return new Promise((resolve, reject) => {
      const req = http.request(`${origin}${url}`, { method, headers }, (res) => {
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () => resolve({ status: res.statusCode!, headers: res.headers as Record<string, string>, body: Buffer.concat(chunks) }));
      });
      req.on('error', reject);
      req.end();
    });
  }

  /** The same download through the app's route (which fills the caches). */
  async function fetchApp(rev: string, bearer: string, options: { file?: 'bundle' | 'bundle.sha256'; headers?: Record<string, string> } = {}): Promise<{ status: number; headers: Headers; body: Buffer }> {
    const route = options.file === 'bundle.sha256' ? checksumRoute : bundleRoute;
    const r = await callEndpoint(world, route.GET, 'anonymous', { params: { workspace: world.slug, controller: door.slug, rev }, query: { target: 'c' }, bearer, headers: options.headers ?? {} });
    return { status: r.status, headers: r.headers, body: Buffer.from(await r.arrayBuffer()) };
  }

  it('passes a download on until the app has answered it once, then answers it alike', async () => {
    const auth = { authorization: `Bearer ${world.key}` };
    expect((await fetchFast(`${path('latest')}?target=c`, auth)).status).toBe(PASSED_ON);
    const app = await fetchApp('latest', world.key);
    expect(app.status).toBe(200);
    const fast = await fetchFast(`${path('latest')}?target=c`, auth);
    expect(fast.status).toBe(200);
    expect(fast.body.equals(app.body)).toBe(true);
    // Every header the route sets, with the same value (node adds Date, Connection, Keep-Alive).
    for (const [name, value] of app.headers) expect(fast.headers[name], name).toBe(value);
    expect(fast.headers['etag']).toMatch(/^"[0-9a-f]{64}"$/);
    expect(fast.headers['x-quiesce-revision']).toBe('2');
    // The headers the middleware adds to every answer.
    expect(fast.headers['x-content-type-options']).toBe('nosniff');
    expect(fast.headers['referrer-policy']).toBe('same-origin');
  });

  it('answers If-None-Match with 304, HEAD without a body, and the checksum like the route', async () => {
    const auth = { authorization: `Bearer ${world.key}` };
    const full = await fetchFast(`${path('latest')}?target=c`, auth);
    const etag = full.headers['etag']!;
    const notModified = await fetchFast(`${path('latest')}?target=c`, { ...auth, 'if-none-match': etag });
    expect(notModified.status).toBe(304);
    expect(notModified.body.byteLength).toBe(0);
    expect(notModified.headers['etag']).toBe(etag);
    const head = await fetchFast(`${path('latest')}?target=c`, auth, 'HEAD');
    expect(head.status).toBe(200);
    expect(head.body.byteLength).toBe(0);
    expect(head.headers['content-length']).toBe(String(full.body.byteLength));

    expect((await fetchFast(`${path('latest', 'bundle.sha256')}?target=c`, auth)).status).toBe(200); // the resolution is shared
    const appSum = await fetchApp('latest', world.key, { file: 'bundle.sha256' });
    const fastSum = await fetchFast(`${path('latest', 'bundle.sha256')}?target=c`, auth);
    expect(fastSum.body.toString()).toBe(appSum.body.toString());
    expect(fastSum.body.toString()).toBe(`${etag.slice(1, -1)}  ${door.slug}-r2-c.zip\n`);
  });

  it('passes on whatever it cannot answer from the caches alone', async () => {
    const auth = { authorization: `Bearer ${world.key}` };
    await fetchApp('latest', world.key);
    const passes = async (url: string, headers: Record<string, string>, method = 'GET') => expect((await fetchFast(url, headers, method)).status, `${method} ${url}`).toBe(PASSED_ON);
    await passes(`${path('latest')}?target=c`, {}); // no key: a session, or nobody
    await passes(`${path('latest')}?target=c`, { authorization: 'Basic dXNlcjpwYXNz' });
    await passes(`${path('latest')}?target=c`, { authorization: `Bearer ${world.key}x` });
    await passes(`${path('latest')}?target=rust`, auth); // another target, not yet resolved
    await passes(`${path('latest')}?target=pdf`, auth); // the route answers the 400
    await passes(`${path('1')}?target=c`, auth); // another revision
    await passes(`${path('latest')}/?target=c`, auth);
    await passes(`${path('%E0%A4%A')}?target=c`, auth); // undecodable
    await passes(`/api/v1/workspaces/${world.slug}/controllers/${door.slug.replace('-', '%2D')}/revisions/latest/bundle?target=c`, auth); // encoded: the router decodes
    await passes(`${path('latest')}?target=c`, auth, 'POST');
    await passes(`${path('latest', 'bundle.sha256')}?target=c`, auth, 'HEAD');
  });

  it('refuses a revoked key at once (the app then answers 404)', async () => {
    const { key, secret } = await createCiKey(world.db, world.members.owner, { name: 'Short-lived' });
    const auth = { authorization: `Bearer ${secret}` };
    expect((await fetchApp('latest', secret)).status).toBe(200);
    expect((await fetchFast(`${path('latest')}?target=c`, auth)).status).toBe(200);
    await revokeCiKey(world.db, world.members.owner, key.id);
    expect((await fetchFast(`${path('latest')}?target=c`, auth)).status).toBe(PASSED_ON);
    expect((await fetchApp('latest', secret)).status).toBe(404);
  });

  it('records the key’s use when it answers', async () => {
    const { key, secret } = await createCiKey(world.db, world.members.owner, { name: 'Use recorder' });
    await fetchApp('latest', secret);
    await world.db.update(s.ciKeys).set({ lastUsedAt: null }).where(eq(s.ciKeys.id, key.id));
    resetCiKeyUseThrottle();
    expect((await fetchFast(`${path('latest')}?target=c`, { authorization: `Bearer ${secret}` })).status).toBe(200);
    let used: Date | null = null;
    for (let i = 0; i < 50 && !used; i++) {
      await new Promise((r) => setTimeout(r, 20)); // recorded after the answer is sent
      [{ lastUsedAt: used }] = (await world.db.select({ lastUsedAt: s.ciKeys.lastUsedAt }).from(s.ciKeys).where(eq(s.ciKeys.id, key.id))) as [{ lastUsedAt: Date | null }];
    }
    expect(used).toBeInstanceOf(Date);
  });
});

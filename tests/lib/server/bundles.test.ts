import { createHash, randomBytes } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import JSZip from 'jszip';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, sql } from 'drizzle-orm';
import { generateBundle } from '../../../src/lib/codegen/bundle';
import { interchangeToTable } from '../../../src/lib/engine/model';
import { clearBundleBytesCache, ensureBundle, findBundle, loadBundleHashes, readBundleBytes } from '../../../src/lib/server/bundles';
import { parseRevSpec, resolveBundle } from '../../../src/lib/server/downloads';
import { bumpDownloadCache, getCachedDownload, readDownloadEpoch, setCachedDownload } from '../../../src/lib/server/download-cache';
import { createRevision, getRevision } from '../../../src/lib/server/revisions';
import * as s from '../../../src/lib/server/schema';
import * as bundleRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/revisions/[rev]/bundle';
import * as checksumRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/revisions/[rev]/bundle.sha256';
import * as historyRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/revisions/index';
import { BACKENDS } from './support/backends';
import { addController, openWorld, callEndpoint, CALLERS, type Caller, type World } from './support/review-world';

const sha256 = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex');

describe.each(BACKENDS)('bundles on $name', (backend) => {
  let world: World;
  let controller: s.ControllerRow;
  beforeAll(async () => {
    world = await openWorld(backend);
    controller = await addController(world, 'Hoist door interlock');
  });
  afterAll(async () => {
    await world?.close();
  });

  const params = (rev: string) => ({ workspace: world.slug, controller: controller.slug, rev });

  it('generates a bundle once, stores it content-addressed, and serves the stored bytes', async () => {
    const rev = (await getRevision(world.db, controller.id, 2))!;
    expect(await findBundle(world.db, rev.id, 'c')).toBeNull();
    const [a, b] = await Promise.all([ensureBundle(world.db, rev, 'c'), ensureBundle(world.db, rev, 'c')]);
    expect(a.id).toBe(b.id);
    const rows = await world.db.select().from(s.bundles).where(and(eq(s.bundles.revisionId, rev.id), eq(s.bundles.target, 'c')));
    expect(rows).toHaveLength(1);
    const bytes = rows[0]!.bytes;
    expect(rows[0]!.sha256).toBe(sha256(bytes));
    expect(rows[0]!.size).toBe(bytes.byteLength);
    // The codegen is deterministic: generating again gives the same bytes (the stored copy wins anyway).
    const again = await generateBundle(interchangeToTable(rev.interchange), { target: 'c', revision: 'r2' });
    expect(again.sha256).toBe(rows[0]!.sha256);
    clearBundleBytesCache();
    expect(sha256(await readBundleBytes(world.db, a))).toBe(a.sha256);
    const zip = await JSZip.loadAsync(bytes);
    expect(Object.keys(zip.files).some((p) => p.endsWith('.c'))).toBe(true);
    const hashes = await loadBundleHashes(world.db, [rev.id]);
    expect(hashes.get(rev.id)).toEqual({ c: a.sha256 });
  });

  it('keeps serving the pinned bundle when a bundle of another generator version exists', async () => {
    const rev = (await getRevision(world.db, controller.id, 1))!;
    const pinned = await ensureBundle(world.db, rev, 'rust');
    // A bundle stored later by a newer generator must not replace the pinned one.
    await world.db.insert(s.bundles).values({ id: 'later-generator', revisionId: rev.id, target: 'rust', generatorVersion: '99.0.0', sha256: 'f'.repeat(64), size: 1, bytes: new Uint8Array([1]) });
    expect((await ensureBundle(world.db, rev, 'rust')).id).toBe(pinned.id);
    const resolved = await resolveBundle(world.db, { bearer: world.key, userId: null }, { workspace: world.slug, controller: controller.slug, rev: '1', target: 'rust', generator: 'pinned' });
    expect(resolved.bundle.sha256).toBe(pinned.sha256);
    const current = await resolveBundle(world.db, { bearer: world.key, userId: null }, { workspace: world.slug, controller: controller.slug, rev: '1', target: 'rust', generator: 'current' });
    expect(current.bundle.id).toBe(pinned.id); // the pinned one is also the current generator's
  });

  it('refuses to change a stored bundle', async () => {
    const updated = await world.db.execute(sql`update bundles set size = 0 where id = 'later-generator'`).catch((e: unknown) => e);
    expect(updated).toBeInstanceOf(Error);
  });

  it('parses {rev} as a number, latest, latest-release or release:{label}', () => {
    expect(parseRevSpec('3')).toEqual({ kind: 'number', number: 3 });
    expect(parseRevSpec('latest')).toEqual({ kind: 'latest' });
    expect(parseRevSpec('latest-release')).toEqual({ kind: 'latest-release' });
    expect(parseRevSpec('release:1.2.0-rc.1')).toEqual({ kind: 'release', label: '1.2.0-rc.1' });
    for (const bad of ['0', '-1', 'r3', 'release:', 'release:/x', 'head', '1e3']) expect(parseRevSpec(bad)).toBeNull();
  });

  it('answers the zip with Content-Disposition, ETag, X-Quiesce-Revision, and 304 for If-None-Match', async () => {
    const first = await callEndpoint(world, bundleRoute.GET, 'key', { params: params('latest'), query: { target: 'c' } });
    expect(first.status).toBe(200);
    const bytes = new Uint8Array(await first.arrayBuffer());
    const hash = sha256(bytes);
    expect(first.headers.get('content-type')).toBe('application/zip');
    expect(first.headers.get('etag')).toBe(`"${hash}"`);
    expect(first.headers.get('x-quiesce-revision')).toBe('2');
    expect(first.headers.get('content-disposition')).toBe(`attachment; filename="${controller.slug}-r2-c.zip"`);
    expect(first.headers.get('content-length')).toBe(String(bytes.byteLength));
    const second = await callEndpoint(world, bundleRoute.GET, 'owner', { params: params('2'), query: { target: 'c' } });
    expect(sha256(new Uint8Array(await second.arrayBuffer()))).toBe(hash);
    const cached = await callEndpoint(world, bundleRoute.GET, 'key', { params: params('2'), query: { target: 'c' }, headers: { 'if-none-match': `W/"zzz", "${hash}"` } });
    expect(cached.status).toBe(304);
    expect(cached.headers.get('etag')).toBe(`"${hash}"`);
    expect(await cached.text()).toBe('');
    const sum = await callEndpoint(world, checksumRoute.GET, 'key', { params: params('latest'), query: { target: 'c' } });
    expect(sum.status).toBe(200);
    expect(await sum.text()).toBe(`${hash}  ${controller.slug}-r2-c.zip\n`);
  });

  it('answers 400 for a bad target and 404 for an unknown revision, release or controller', async () => {
    expect((await callEndpoint(world, bundleRoute.GET, 'key', { params: params('latest'), query: { target: 'ada' } })).status).toBe(400);
    expect((await callEndpoint(world, bundleRoute.GET, 'key', { params: params('latest'), query: {} })).status).toBe(400);
    for (const rev of ['9', 'release:9.9.9', 'latest-release', 'bogus']) {
      const r = await callEndpoint(world, bundleRoute.GET, 'key', { params: params(rev), query: { target: 'c' } });
      expect(r.status, rev).toBe(404);
      expect(((await r.json()) as { error: { code: string } }).error.code).toBe('not_found');
    }
    const other = await callEndpoint(world, bundleRoute.GET, 'key', { params: { ...params('1'), controller: 'no-such' }, query: { target: 'c' } });
    expect(other.status).toBe(404);
  });

  // The role matrix of the read endpoints here: every member and the workspace's key may read,
  // everyone else gets 404 (never 403), so existence is not revealed.
  const READ: Record<Caller, number> = { owner: 200, editor: 200, reviewer: 200, viewer: 200, outsider: 404, anonymous: 404, key: 200 };
  it.each(CALLERS)('role matrix: %s reading bundle, checksum and history', async (caller) => {
    const zip = await callEndpoint(world, bundleRoute.GET, caller, { params: params('1'), query: { target: 'rust' } });
    expect(zip.status).toBe(READ[caller]);
    const sum = await callEndpoint(world, checksumRoute.GET, caller, { params: params('1'), query: { target: 'rust' } });
    expect(sum.status).toBe(READ[caller]);
    const history = await callEndpoint(world, historyRoute.GET, caller, { params: { workspace: world.slug, controller: controller.slug } });
    expect(history.status).toBe(READ[caller]);
    if (READ[caller] === 200) {
      const body = (await history.json()) as { revisions: { number: number; bundles: Record<string, string>; review: string }[] };
      expect(body.revisions.map((r) => r.number)).toEqual([2, 1]);
      expect(body.revisions[1]!.bundles.rust).toMatch(/^[0-9a-f]{64}$/);
      expect(body.revisions[0]!.review).toBe('none');
    }
  });

  it('drops cached resolutions when a newer revision is saved, and never stores one read across a change', async () => {
    const c = await addController(world, 'Cache check');
    const latest = () => callEndpoint(world, bundleRoute.GET, 'key', { params: { workspace: world.slug, controller: c.slug, rev: 'latest' }, query: { target: 'c' } });
    expect((await latest()).headers.get('x-quiesce-revision')).toBe('2');
    expect((await latest()).headers.get('x-quiesce-revision')).toBe('2'); // served from the cache
    const r2 = (await getRevision(world.db, c.id, 2))!;
    await createRevision(world.db, { controllerId: c.id, baseNumber: 2, source: r2.source.replace('run/-', 'run/1'), message: 'r3', author: world.users.editor.id });
    expect((await latest()).headers.get('x-quiesce-revision')).toBe('3');
    const epoch = readDownloadEpoch();
    await bumpDownloadCache(world.db);
    setCachedDownload('stale-entry', epoch, 'old');
    expect(getCachedDownload('stale-entry')).toBeUndefined();
    setCachedDownload('fresh-entry', readDownloadEpoch(), 'new');
    expect(getCachedDownload('fresh-entry')).toBe('new');
  });

  it('records key use at most once a minute, with an audit entry', async () => {
    const [key] = await world.db.select().from(s.ciKeys).where(eq(s.ciKeys.id, world.keyId));
    expect(key!.lastUsedAt).toBeInstanceOf(Date);
    const uses = await world.db.select().from(s.auditLog).where(and(eq(s.auditLog.actorKeyId, world.keyId), eq(s.auditLog.action, 'ci-key.used')));
    expect(uses).toHaveLength(1);
    const people = await world.db.select().from(s.auditLog).where(eq(s.auditLog.action, 'bundle.downloaded'));
    expect(people.length).toBeGreaterThan(0);
  });
});

// Byte-identical downloads across requests and across a restart of the BUILT server on the
// same data (the embedded database directory, or the same PostgreSQL database).
const BUILT: { name: string; prepare: () => Promise<{ env: Record<string, string>; dataDir?: string; cleanup: () => Promise<void> }> }[] = [
  {
    name: 'pglite',
    prepare: async () => {
      const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'quiesce-built-'));
      return { env: {}, dataDir: dir, cleanup: async () => fs.rmSync(dir, { recursive: true, force: true }) };
    },
  },
  ...(process.env.TEST_DATABASE_URL
    ? [
        {
          name: 'postgres',
          prepare: async () => {
            const admin = new pg.Client({ connectionString: process.env.TEST_DATABASE_URL });
            const name = `quiesce_built_${randomBytes(5).toString('hex')}`;
            await admin.connect();
            await admin.query(`create database ${name}`);
            await admin.end();
            const url = new URL(process.env.TEST_DATABASE_URL!);
            url.pathname = `/${name}`;
            return {
              env: { DATABASE_URL: url.toString(), QUIESCE_DEMO: '1' },
              cleanup: async () => {
                const dropper = new pg.Client({ connectionString: process.env.TEST_DATABASE_URL });
                await dropper.connect();
                await dropper.query(`drop database if exists ${name} with (force)`);
                await dropper.end();
              },
            };
          },
        },
      ]
    : []),
];

describe.each(BUILT)('built server on $name', (backend) => {
  const KEY = 'qk_demo_halvorsen_line3_4f7c2a9e81d0b6c5'; // the documented demo key (src/lib/server/demo/accounts.ts)
  it('serves byte-identical bundles across requests and across a restart', async () => {
    const { startServer } = await import('../../e2e/support/server');
    const prepared = await backend.prepare();
    const fetchBundle = async (url: string, rev: string, target: string) => {
      const r = await fetch(`${url}/api/v1/workspaces/halvorsen/controllers/door-interlock/revisions/${rev}/bundle?target=${target}`, { headers: { authorization: `Bearer ${KEY}` } });
      expect(r.status).toBe(200);
      return { bytes: new Uint8Array(await r.arrayBuffer()), etag: r.headers.get('etag'), revision: r.headers.get('x-quiesce-revision') };
    };
    try {
      let server = await startServer({ env: prepared.env, ...(prepared.dataDir ? { dataDir: prepared.dataDir } : {}) });
      const first = await fetchBundle(server.url, 'latest', 'c');
      const again = await fetchBundle(server.url, '1', 'c');
      const rust = await fetchBundle(server.url, 'latest', 'rust');
      const sum = await fetch(`${server.url}/api/v1/workspaces/halvorsen/controllers/door-interlock/revisions/1/bundle.sha256?target=c`, { headers: { authorization: `Bearer ${KEY}` } });
      const sumText = await sum.text();
      await server.stop({ keepData: true });
      server = await startServer({ env: prepared.env, ...(prepared.dataDir ? { dataDir: prepared.dataDir } : {}) });
      try {
        const after = await fetchBundle(server.url, 'latest', 'c');
        const rustAfter = await fetchBundle(server.url, '1', 'rust');
        expect(first.etag).toBe(`"${sha256(first.bytes)}"`);
        expect(first.revision).toBe('1');
        expect(Buffer.from(again.bytes).equals(Buffer.from(first.bytes))).toBe(true);
        expect(Buffer.from(after.bytes).equals(Buffer.from(first.bytes))).toBe(true);
        expect(Buffer.from(rustAfter.bytes).equals(Buffer.from(rust.bytes))).toBe(true);
        expect(after.etag).toBe(first.etag);
        expect(sumText).toBe(`${sha256(first.bytes)}  door-interlock-r1-c.zip\n`);
        const notModified = await fetch(`${server.url}/api/v1/workspaces/halvorsen/controllers/door-interlock/revisions/latest/bundle?target=c`, { headers: { authorization: `Bearer ${KEY}`, 'if-none-match': first.etag! } });
        expect(notModified.status).toBe(304);
        const anonymous = await fetch(`${server.url}/api/v1/workspaces/halvorsen/controllers/door-interlock/revisions/latest/bundle?target=c`);
        expect(anonymous.status).toBe(404);
        const openapi = await fetch(`${server.url}/api/v1/openapi.json`);
        expect(openapi.status).toBe(200);
      } finally {
        await server.stop({ keepData: true });
      }
    } finally {
      await prepared.cleanup();
    }
  }, 900_000);
});

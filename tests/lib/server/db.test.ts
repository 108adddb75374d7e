import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import { DataDirLockedError, lockDataDir, openDatabase, type DatabaseHandle } from '../../../src/lib/server/db';
import { toApiError } from '../../../src/lib/server/errors';
import * as s from '../../../src/lib/server/schema';
import { BACKENDS } from './support/backends';

describe.each(BACKENDS)('database on $name', (backend) => {
  let handle: DatabaseHandle;
  beforeAll(async () => {
    handle = await backend.open();
  });
  afterAll(async () => {
    await handle?.close();
  });

  it('applies every migration and starts empty', async () => {
    expect(handle.wasEmpty).toBe(true);
    const rows = await handle.db.select().from(s.workspaces);
    expect(rows).toEqual([]);
  });

  it('maps a unique clash to 409 and a bad reference to 400', async () => {
    const { db } = handle;
    await db.insert(s.users).values({ id: 'u1', email: 'a@example.test', passwordHash: 'x', displayName: 'A' });
    const clash = await db
      .insert(s.users)
      .values({ id: 'u2', email: 'a@example.test', passwordHash: 'x', displayName: 'B' })
      .catch((e: unknown) => e);
    const clashError = toApiError(clash);
    expect(clashError.status).toBe(409);
    expect(clashError.field).toBe('email');
    const dangling = await db
      .insert(s.sessions)
      .values({ id: 's1', userId: 'nobody', expiresAt: new Date() })
      .catch((e: unknown) => e);
    expect(toApiError(dangling).status).toBe(400);
    const upper = await db
      .insert(s.users)
      .values({ id: 'u3', email: 'Upper@example.test', passwordHash: 'x', displayName: 'C' })
      .catch((e: unknown) => e);
    expect(toApiError(upper).status).toBe(400);
  });

  it('keeps revisions immutable but lets an author account be deleted', async () => {
    const { db } = handle;
    await db.insert(s.users).values({ id: 'u9', email: 'author@example.test', passwordHash: 'x', displayName: 'Au' });
    await db.insert(s.workspaces).values({ id: 'w1', slug: 'w1', name: 'W1' });
    await db.insert(s.controllers).values({ id: 'c1', workspaceId: 'w1', slug: 'c1', name: 'C1' });
    await db.insert(s.revisions).values({
      id: 'r1', controllerId: 'c1', number: 1, authorId: 'u9', source: 'x', interchange: { a: 1 },
      findings: { error: 0, warning: 0, info: 0 },
    });
    const edit = await db.update(s.revisions).set({ source: 'changed' }).where(eq(s.revisions.id, 'r1')).catch((e: unknown) => e);
    const editError = toApiError(edit);
    expect(editError.status).toBe(409);
    expect(editError.code).toBe('immutable');
    await db.delete(s.users).where(eq(s.users.id, 'u9'));
    const [row] = await db.select().from(s.revisions).where(eq(s.revisions.id, 'r1'));
    expect(row?.authorId).toBeNull();
    expect(row?.source).toBe('x');
  });

  it('round-trips bytea bytes exactly', async () => {
    const { db } = handle;
    const bytes = new Uint8Array(256).map((_, i) => 255 - i);
    await db.insert(s.bundles).values({
      id: 'b1', revisionId: 'r1', target: 'c', generatorVersion: '0', sha256: 'h', size: bytes.length, bytes,
    });
    const [row] = await db.select().from(s.bundles).where(eq(s.bundles.id, 'b1'));
    expect(row?.bytes).toBeInstanceOf(Uint8Array);
    expect(Array.from(row!.bytes)).toEqual(Array.from(bytes));
    const [total] = await db.select({ n: sql<number>`count(*)::int` }).from(s.bundles);
    expect(total).toEqual({ n: 1 });
  });
});

describe('data directory lock', () => {
  it('refuses a second live opener and takes over a stale lock', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'quiesce-lock-'));
    // A live foreign holder: the parent of this test process is alive for the whole test.
    fs.writeFileSync(path.join(dir, 'quiesce.lock'), JSON.stringify({ pid: process.ppid, host: os.hostname() }));
    expect(() => lockDataDir(dir)).toThrow(DataDirLockedError);
    expect(() => lockDataDir(dir)).toThrow(/in use by another Quiesce process/);
    // A dead holder: a child that has already exited.
    const dead = spawnSync(process.execPath, ['-e', 'process.stdout.write(String(process.pid))']);
    fs.writeFileSync(path.join(dir, 'quiesce.lock'), JSON.stringify({ pid: Number(dead.stdout.toString()), host: os.hostname() }));
    const handle = await openDatabase({ dataDir: dir });
    const lock = JSON.parse(fs.readFileSync(path.join(dir, 'quiesce.lock'), 'utf8')) as { pid: number };
    expect(lock.pid).toBe(process.pid);
    await handle.db.insert(s.workspaces).values({ id: 'w', slug: 'kept', name: 'Kept' });
    await handle.close();
    expect(fs.existsSync(path.join(dir, 'quiesce.lock'))).toBe(false);
    const again = await openDatabase({ dataDir: dir });
    const rows = await again.db.select().from(s.workspaces);
    expect(rows.map((r) => r.slug)).toEqual(['kept']);
    expect(again.wasEmpty).toBe(true);
    await again.close();
    fs.rmSync(dir, { recursive: true, force: true });
  });
});

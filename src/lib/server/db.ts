/**
 * The one database client of the process. PGlite (embedded PostgreSQL in WASM)
 * stores its files in `QUIESCE_DATA_DIR` (default ./.data); `DATABASE_URL=postgres://…`
 * switches to a PostgreSQL server through node-postgres. Migrations from drizzle/
 * are applied at start; in demo mode an empty database gets the demo data.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { PGlite } from '@electric-sql/pglite';
import { drizzle as drizzlePglite } from 'drizzle-orm/pglite';
import { migrate as migratePglite } from 'drizzle-orm/pglite/migrator';
import { drizzle as drizzlePg } from 'drizzle-orm/node-postgres';
import { migrate as migratePg } from 'drizzle-orm/node-postgres/migrator';
import type { PgDatabase, PgQueryResultHKT } from 'drizzle-orm/pg-core';
import pg from 'pg';
import { readConfig } from './config';
import * as schema from './schema';

/** A Drizzle database (or transaction) over the Quiesce schema, on either backend. */
export type Db = PgDatabase<PgQueryResultHKT, typeof schema>;

/** An open database with its backend and a way to close it. */
export type DatabaseHandle = {
  db: Db;
  backend: 'pglite' | 'postgres';
  /** True when the database had no users before this start (used to decide on seeding). */
  wasEmpty: boolean;
  close: () => Promise<void>;
};

/** Options of openDatabase(); without dataDir and url an in-memory PGlite is used. */
export type OpenOptions = {
  /** Directory for PGlite files (a lock file is held inside). */
  dataDir?: string | undefined;
  /** postgres:// URL; wins over dataDir. */
  url?: string | undefined;
  /** Run this with the freshly migrated database before it is handed out (e.g. seeding). */
  afterMigrate?: ((db: Db, info: { wasEmpty: boolean }) => Promise<void>) | undefined;
};

/** Thrown when another live process holds the data directory. */
export class DataDirLockedError extends Error {
  constructor(
    readonly dataDir: string,
    readonly pid: number,
  ) {
    super(
      `The data directory ${dataDir} is in use by another Quiesce process (pid ${pid}). ` +
        `The embedded database allows one process at a time: stop that process, or start this one with ` +
        `QUIESCE_DATA_DIR set to another directory, or use PostgreSQL via DATABASE_URL for several instances.`,
    );
    this.name = 'DataDirLockedError';
  }
}

/** Finds drizzle/ (with meta/_journal.json) from the working directory or this module upwards. */
export function findMigrationsFolder(): string {
  const fromEnv = process.env.QUIESCE_MIGRATIONS_DIR;
  if (fromEnv) return path.resolve(fromEnv);
  const starts = [process.cwd(), path.dirname(fileURLToPath(import.meta.url))];
  for (const start of starts) {
    let dir = start;
    for (let i = 0; i < 8; i += 1) {
      if (fs.existsSync(path.join(dir, 'drizzle', 'meta', '_journal.json'))) return path.join(dir, 'drizzle');
      const parent = path.dirname(dir);
      if (parent === dir) break;
      dir = parent;
    }
  }
  throw new Error('Cannot find the drizzle/ migrations folder; run from the project directory or set QUIESCE_MIGRATIONS_DIR.');
}

function isAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (error) {
    return (error as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/** Takes the pid lock of a data directory (taking over a stale one) and returns its release function. */
export function lockDataDir(dataDir: string): () => void {
  fs.mkdirSync(dataDir, { recursive: true });
  const lockPath = path.join(dataDir, 'quiesce.lock');
  const content = JSON.stringify({ pid: process.pid, host: os.hostname(), since: new Date().toISOString() });
  for (let attempt = 0; attempt < 3; attempt += 1) {
    try {
      fs.writeFileSync(lockPath, content, { flag: 'wx' });
      let released = false;
      const release = () => {
        if (released) return;
        released = true;
        try {
          const current = JSON.parse(fs.readFileSync(lockPath, 'utf8')) as { pid?: number };
          if (current.pid === process.pid) fs.unlinkSync(lockPath);
        } catch {
          // Already gone: nothing to release.
        }
      };
      process.once('exit', release);
      return release;
    } catch (error) {
      if ((error as NodeJS.ErrnoException).code !== 'EEXIST') throw error;
      let holder: { pid?: unknown; host?: unknown } = {};
      try {
        holder = JSON.parse(fs.readFileSync(lockPath, 'utf8')) as typeof holder;
      } catch {
        // Unreadable or half-written lock: treat as stale.
      }
      const pid = typeof holder.pid === 'number' ? holder.pid : NaN;
      const sameHost = holder.host === undefined || holder.host === os.hostname();
      if (Number.isInteger(pid) && pid !== process.pid && (!sameHost || isAlive(pid))) {
        throw new DataDirLockedError(dataDir, pid);
      }
      if (pid === process.pid) {
        throw new Error(`The data directory ${dataDir} is already open in this process; use getDb().`);
      }
      fs.rmSync(lockPath, { force: true }); // stale: the holder is dead
    }
  }
  throw new Error(`Could not take the lock ${lockPath}.`);
}

async function countUsers(db: Db): Promise<number> {
  const rows = await db.select({ id: schema.users.id }).from(schema.users).limit(1);
  return rows.length;
}

/** Opens a database, applies migrations, runs afterMigrate, and returns it (tests call this directly). */
export async function openDatabase(options: OpenOptions = {}): Promise<DatabaseHandle> {
  const migrationsFolder = findMigrationsFolder();
  if (options.url) {
    const pool = new pg.Pool({ connectionString: options.url, max: Number(process.env.QUIESCE_PG_POOL ?? 10) });
    pool.on('error', (error) => console.error('[quiesce] idle PostgreSQL client error:', error.message));
    // Several app instances may start together: migrate and seed under an advisory lock, on one connection.
    const client = await pool.connect();
    let wasEmpty = false;
    try {
      await client.query('select pg_advisory_lock(727100)');
      const single = drizzlePg(client, { schema }) as unknown as Db;
      await migratePg(single as never, { migrationsFolder });
      wasEmpty = (await countUsers(single)) === 0;
      await options.afterMigrate?.(single, { wasEmpty });
    } finally {
      await client.query('select pg_advisory_unlock(727100)').catch(() => undefined);
      client.release();
    }
    const db = drizzlePg(pool, { schema }) as unknown as Db;
    return { db, backend: 'postgres', wasEmpty, close: () => pool.end() };
  }

  let release: (() => void) | null = null;
  let client: PGlite;
  if (options.dataDir) {
    release = lockDataDir(options.dataDir);
    try {
      client = await PGlite.create({ dataDir: path.join(options.dataDir, 'pglite') });
    } catch (error) {
      release();
      throw error;
    }
  } else {
    client = await PGlite.create();
  }
  const db = drizzlePglite(client, { schema }) as unknown as Db;
  let closed = false;
  const close = async () => {
    if (closed) return;
    closed = true;
    try {
      await client.close();
    } finally {
      release?.();
    }
  };
  try {
    await migratePglite(db as never, { migrationsFolder });
    const wasEmpty = (await countUsers(db)) === 0;
    await options.afterMigrate?.(db, { wasEmpty });
    return { db, backend: 'pglite', wasEmpty, close };
  } catch (error) {
    await close();
    throw error;
  }
}

type GlobalWithDb = typeof globalThis & { __quiesceDb?: Promise<DatabaseHandle> };

/** Returns the process-wide database (opened, migrated and, in demo mode, seeded on first call). */
export function getDatabase(): Promise<DatabaseHandle> {
  const g = globalThis as GlobalWithDb;
  if (!g.__quiesceDb) {
    const config = readConfig();
    g.__quiesceDb = openDatabase({
      url: config.databaseUrl ?? undefined,
      dataDir: config.databaseUrl ? undefined : config.dataDir,
      afterMigrate: async (db, { wasEmpty }) => {
        if (!config.demo) return;
        const { ensureDemoRelease, seedDemo } = await import('./demo/seed');
        if (wasEmpty) await seedDemo(db);
        else
          await ensureDemoRelease(db).catch((error: unknown) => {
            console.error('[quiesce] finishing the demo release failed; the app runs without it:', error instanceof Error ? error.message : error);
          });
      },
    }).then((handle) => {
      installShutdown(handle);
      return handle;
    });
    g.__quiesceDb.catch(() => {
      delete g.__quiesceDb; // allow a retry after e.g. a lock error was resolved
    });
  }
  return g.__quiesceDb;
}

/** Returns the process-wide Drizzle client (see getDatabase). */
export async function getDb(): Promise<Db> {
  return (await getDatabase()).db;
}

let shutdownInstalled = false;
function installShutdown(handle: DatabaseHandle): void {
  if (shutdownInstalled) return;
  shutdownInstalled = true;
  const stop = (signal: NodeJS.Signals) => {
    handle
      .close()
      .catch((error: unknown) => console.error('[quiesce] closing the database failed:', error))
      .finally(() => process.exit(signal === 'SIGINT' ? 130 : 143));
  };
  process.once('SIGINT', stop);
  process.once('SIGTERM', stop);
}

/**
 * A small in-process cache of resolved CI-key downloads (key + workspace + controller + rev +
 * target → revision and pinned bundle), so a CI farm hammering one URL costs no database round
 * trip per request.
 *
 * Why it stays correct: every write that can change a resolution (a key revoked, a revision
 * saved, a release published) bumps an epoch after its commit, and an entry is used only while
 * the epoch it was read under is still current, so a revoked key is refused on the very next
 * request. Entries read while a bump happened are never used. With PostgreSQL and several
 * instances, the bump is also sent as NOTIFY and every instance listens; while an instance is
 * not listening it does not cache at all. A short time-to-live bounds anything else (e.g. a
 * workspace deleted), and the cache holds a bounded number of entries.
 */
import pg from 'pg';
import { sql } from 'drizzle-orm';
import { readConfig } from './config';
import type { Db } from './db';

/** Longest time an entry is trusted, whatever happens. */
export const DOWNLOAD_CACHE_TTL_MS = 5_000;

const MAX_ENTRIES = 2_000;
const CHANNEL = 'quiesce_downloads';

type Entry<T> = { epoch: number; expires: number; value: T };

type CacheState = {
  epoch: number;
  entries: Map<string, Entry<unknown>>;
  listening: 'off' | 'starting' | 'on' | 'failed';
  listener: pg.Client | null;
};

const g = globalThis as typeof globalThis & { __quiesceDownloadCache?: CacheState };
const state: CacheState = (g.__quiesceDownloadCache ??= { epoch: 0, entries: new Map(), listening: 'off', listener: null });

function startListener(url: string): void {
  state.listening = 'starting';
  const client = new pg.Client({ connectionString: url });
  const stop = () => {
    state.listening = 'failed';
    state.listener = null;
    state.epoch += 1;
    client.end().catch(() => undefined);
  };
  client.on('error', stop);
  client.on('end', () => {
    if (state.listening === 'on') stop();
  });
  client.on('notification', () => {
    state.epoch += 1;
  });
  client
    .connect()
    .then(() => client.query(`LISTEN ${CHANNEL}`))
    .then(() => {
      state.listener = client;
      state.listening = 'on';
      state.epoch += 1; // anything cached before listening started is dropped
    })
    .catch((error: unknown) => {
      console.error('[quiesce] download cache listener failed; caching stays off:', error instanceof Error ? error.message : error);
      stop();
    });
  (client as unknown as { connection?: { stream?: { unref?: () => void } } }).connection?.stream?.unref?.();
}

/** Whether caching is safe right now (always with the embedded database; with PostgreSQL only while listening). */
function cachingAllowed(): boolean {
  const url = readConfig().databaseUrl;
  if (!url) return true;
  if (state.listening === 'off') startListener(url);
  return state.listening === 'on';
}

/** The current epoch; read it before the database lookup whose result you will store. */
export function readDownloadEpoch(): number {
  return state.epoch;
}

/** A cached value still valid under the current epoch, or undefined. */
export function getCachedDownload<T>(key: string): T | undefined {
  const entry = state.entries.get(key);
  if (!entry) return undefined;
  if (entry.epoch !== state.epoch || entry.expires < Date.now() || !cachingAllowed()) {
    state.entries.delete(key);
    return undefined;
  }
  return entry.value as T;
}

/** Stores a value read under `epoch` (ignored when a bump happened meanwhile). */
export function setCachedDownload<T>(key: string, epoch: number, value: T): void {
  if (epoch !== state.epoch || !cachingAllowed()) return;
  if (state.entries.size >= MAX_ENTRIES) {
    const oldest = state.entries.keys().next();
    if (!oldest.done) state.entries.delete(oldest.value);
  }
  state.entries.set(key, { epoch, expires: Date.now() + DOWNLOAD_CACHE_TTL_MS, value });
}

/**
 * Invalidates every cached download, here at once and (with PostgreSQL) in every other instance.
 * Call it after the commit of a write that changes what a download resolves to.
 */
export async function bumpDownloadCache(db: Db): Promise<void> {
  state.epoch += 1;
  state.entries.clear();
  if (readConfig().databaseUrl) {
    await db.execute(sql`select pg_notify(${CHANNEL}, '')`).catch((error: unknown) => {
      console.error('[quiesce] could not notify other instances of a download change:', error instanceof Error ? error.message : error);
    });
  }
}

/**
 * Bundles: the generated zip of one revision and target, made once per generator version and
 * stored content-addressed (sha256) in the bundles table. Downloads serve the stored bytes.
 *
 * Why a revision's bundle is "pinned": the first bundle stored for (revision, target) is the
 * one every later request gets, even after the generator is upgraded, so a stable URL keeps
 * giving byte-identical zips. A newer generator's output is available on request
 * (`generator=current`) and is then stored next to it, once.
 *
 * Bundles are made lazily, on the first download, compare or review request (publishing a
 * release makes both targets), because generating both targets on every save would slow saves
 * down for designs that are never fetched. Concurrent first requests converge on one row: the
 * insert is `on conflict do nothing` on the unique (revision, target, generator version) index,
 * followed by a re-read.
 */
import { and, asc, eq, inArray } from 'drizzle-orm';
import JSZip from 'jszip';
import { generateBundle } from '../codegen/bundle';
import { GENERATOR_VERSION } from '../codegen/options';
import { FlowTableError, interchangeToTable } from '../engine/model';
import type { Db } from './db';
import { ApiError } from './errors';
import { newId } from './ids';
import { bundles, TARGETS, type RevisionRow, type Target } from './schema';

/** Bundle facts without the bytes. */
export interface BundleMeta {
  id: string;
  revisionId: string;
  target: Target;
  generatorVersion: string;
  sha256: string;
  size: number;
  createdAt: Date;
}

/** Which stored bundle to use: the pinned one (default) or the current generator's. */
export type GeneratorChoice = 'pinned' | 'current';

/** The generator version this server runs. */
export const CURRENT_GENERATOR_VERSION = GENERATOR_VERSION;

/** The columns of a BundleMeta (every bundle column but the bytes), for selects and subqueries. */
export const bundleMetaColumns = {
  id: bundles.id,
  revisionId: bundles.revisionId,
  target: bundles.target,
  generatorVersion: bundles.generatorVersion,
  sha256: bundles.sha256,
  size: bundles.size,
  createdAt: bundles.createdAt,
};

/** The download file name of a bundle, e.g. `door-interlock-r3-c.zip`. */
export function bundleFilename(controllerSlug: string, revisionNumber: number, target: Target): string {
  return `${controllerSlug}-r${revisionNumber}-${target}.zip`;
}

/** The stored bundle of a revision and target: the pinned (oldest) one, or one generator version's; null when none. */
export async function findBundle(db: Db, revisionId: string, target: Target, generatorVersion?: string): Promise<BundleMeta | null> {
  const [row] = await db
    .select(bundleMetaColumns)
    .from(bundles)
    .where(
      and(
        eq(bundles.revisionId, revisionId),
        eq(bundles.target, target),
        generatorVersion !== undefined ? eq(bundles.generatorVersion, generatorVersion) : undefined,
      ),
    )
    .orderBy(asc(bundles.createdAt), asc(bundles.id))
    .limit(1);
  return row ?? null;
}

const inFlight = new Map<string, Promise<BundleMeta>>();

async function generateAndStore(db: Db, revision: Pick<RevisionRow, 'id' | 'number' | 'interchange'>, target: Target): Promise<BundleMeta> {
  let zip: Uint8Array;
  let sha256: string;
  try {
    const table = interchangeToTable(revision.interchange);
    const bundle = await generateBundle(table, { target, revision: `r${revision.number}`, generatorVersion: GENERATOR_VERSION });
    zip = bundle.zip;
    sha256 = bundle.sha256;
  } catch (error) {
    if (error instanceof FlowTableError) {
      throw new ApiError(409, 'not_generatable', `Code cannot be generated for r${revision.number}: ${error.issues[0]?.message ?? error.message}`);
    }
    throw error;
  }
  await db
    .insert(bundles)
    .values({ id: newId(), revisionId: revision.id, target, generatorVersion: GENERATOR_VERSION, sha256, size: zip.byteLength, bytes: zip })
    .onConflictDoNothing({ target: [bundles.revisionId, bundles.target, bundles.generatorVersion] });
  const stored = await findBundle(db, revision.id, target, GENERATOR_VERSION);
  if (!stored) throw new Error('bundle vanished after insert');
  rememberBytes(stored.sha256, zip);
  return stored;
}

/**
 * The bundle of a revision and target, generating and storing it when there is none yet
 * (`pinned`: any stored one wins; `current`: the one of this server's generator version).
 */
export async function ensureBundle(
  db: Db,
  revision: Pick<RevisionRow, 'id' | 'number' | 'interchange'>,
  target: Target,
  choice: GeneratorChoice = 'pinned',
): Promise<BundleMeta> {
  const found = await findBundle(db, revision.id, target, choice === 'current' ? GENERATOR_VERSION : undefined);
  if (found) return found;
  const key = `${revision.id}:${target}:${GENERATOR_VERSION}`;
  let pending = inFlight.get(key);
  if (!pending) {
    pending = generateAndStore(db, revision, target).finally(() => inFlight.delete(key));
    inFlight.set(key, pending);
  }
  return pending;
}

/** Makes sure a revision has a bundle for every target (review requests and releases pin them). */
export async function ensureAllBundles(db: Db, revision: Pick<RevisionRow, 'id' | 'number' | 'interchange'>): Promise<Record<Target, BundleMeta>> {
  const out = {} as Record<Target, BundleMeta>;
  for (const target of TARGETS) out[target] = await ensureBundle(db, revision, target);
  return out;
}

/** The pinned bundle sha256 per target of many revisions (targets never generated are absent). */
export async function loadBundleHashes(db: Db, revisionIds: string[]): Promise<Map<string, Partial<Record<Target, string>>>> {
  const out = new Map<string, Partial<Record<Target, string>>>();
  if (revisionIds.length === 0) return out;
  const rows = await db
    .select({ revisionId: bundles.revisionId, target: bundles.target, sha256: bundles.sha256 })
    .from(bundles)
    .where(inArray(bundles.revisionId, revisionIds))
    .orderBy(asc(bundles.createdAt), asc(bundles.id));
  for (const r of rows) {
    const entry = out.get(r.revisionId) ?? {};
    if (!entry[r.target]) entry[r.target] = r.sha256; // the oldest is the pinned one
    out.set(r.revisionId, entry);
  }
  return out;
}

// Bytes are immutable and addressed by their sha256, so caching them can never serve stale data.
const BYTES_CACHE_LIMIT = 64 * 1024 * 1024;
const bytesCache = new Map<string, Uint8Array>();
let bytesCached = 0;

function rememberBytes(sha256: string, bytes: Uint8Array): void {
  if (bytesCache.has(sha256) || bytes.byteLength > BYTES_CACHE_LIMIT / 4) return;
  // A fresh, exactly sized copy: a Response body from the zip library's or the driver's own
  // array was several times slower to answer with on every request.
  bytesCache.set(sha256, Uint8Array.from(bytes));
  bytesCached += bytes.byteLength;
  for (const [key, value] of bytesCache) {
    if (bytesCached <= BYTES_CACHE_LIMIT) break;
    bytesCache.delete(key);
    bytesCached -= value.byteLength;
  }
}

/** The stored bytes of a bundle (from a small in-process cache keyed by sha256, else the database). */
export async function readBundleBytes(db: Db, bundle: Pick<BundleMeta, 'id' | 'sha256'>): Promise<Uint8Array> {
  const cached = bytesCache.get(bundle.sha256);
  if (cached) {
    bytesCache.delete(bundle.sha256); // refresh its place in the LRU order
    bytesCache.set(bundle.sha256, cached);
    return cached;
  }
  const [row] = await db.select({ bytes: bundles.bytes }).from(bundles).where(eq(bundles.id, bundle.id));
  if (!row) throw new Error(`bundle ${bundle.id} has no bytes`);
  rememberBytes(bundle.sha256, row.bytes);
  return bytesCache.get(bundle.sha256) ?? row.bytes;
}

/** The bytes of a bundle when the in-process cache holds them (no database round trip), else undefined. */
export function peekBundleBytes(sha256: string): Uint8Array | undefined {
  return bytesCache.get(sha256);
}

/** Forgets cached bytes (tests use it to prove the database copy is served). */
export function clearBundleBytesCache(): void {
  bytesCache.clear();
  bytesCached = 0;
}

/** One text file of a bundle. */
export interface BundleTextFile {
  path: string;
  content: string;
}

/** The files inside a stored bundle zip, sorted by path (for the code diff: what CI downloads is what reviewers read). */
export async function readBundleFiles(db: Db, bundle: Pick<BundleMeta, 'id' | 'sha256'>): Promise<BundleTextFile[]> {
  const zip = await JSZip.loadAsync(await readBundleBytes(db, bundle));
  const files: BundleTextFile[] = [];
  for (const entry of Object.values(zip.files)) {
    if (entry.dir) continue;
    files.push({ path: entry.name, content: await entry.async('string') });
  }
  return files.sort((a, b) => (a.path < b.path ? -1 : a.path > b.path ? 1 : 0));
}

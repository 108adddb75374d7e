/**
 * Who may read a controller over the v1 API (a member's session or a CI key), how a `{rev}`
 * path segment names a revision, and the bundle download itself. Every failure to find or to
 * be allowed reads as 404, so the API never reveals that a workspace, controller, revision or
 * release exists to someone who may not see it.
 */
import { and, asc, desc, eq, isNull, sql } from 'drizzle-orm';
import { z } from 'zod';
import { recordAudit } from './audit';
import { bundleFilename, bundleMetaColumns, ensureBundle, peekBundleBytes, readBundleBytes, CURRENT_GENERATOR_VERSION, type BundleMeta, type GeneratorChoice } from './bundles';
import { getCachedDownload, readDownloadEpoch, setCachedDownload } from './download-cache';
import { ciKeyRowToPrincipal, ciKeyToHash, CI_KEY_PREFIX, keyCanRead, recordCiKeyUse, type CiKeyPrincipal } from './ci-keys';
import type { Db } from './db';
import { fail, zodToApiError } from './errors';
import { can, type Action } from './permissions';
import { bundles, ciKeys, controllers, memberships, releases, revisions, TARGETS, workspaces, type ControllerRow, type Role, type Target } from './schema';

/** A release label: letters, digits and `. + _ -`, starting with a letter or digit (it appears in URLs). */
export const releaseLabelSchema = z
  .string()
  .trim()
  .min(1, 'Give the release a version label, e.g. 1.0.0.')
  .max(64, 'A release label is at most 64 characters.')
  .regex(/^[0-9A-Za-z][0-9A-Za-z.+_-]*$/, 'A release label uses letters, digits and . + _ - and starts with a letter or digit, e.g. 1.4.0.');

/** The `{rev}` path segment: a revision number, `latest`, `latest-release` or `release:{label}`. */
export const revSpecSchema = z
  .string()
  .regex(
    /^(?:[1-9][0-9]{0,6}|latest|latest-release|release:[0-9A-Za-z][0-9A-Za-z.+_-]{0,63})$/,
    'a revision is a number, latest, latest-release or release:{label}',
  );

/** A parsed `{rev}`. */
export type RevSpec = { kind: 'number'; number: number } | { kind: 'latest' } | { kind: 'latest-release' } | { kind: 'release'; label: string };

/** Parses a `{rev}` segment (URL-decoded), or null when it is not one. */
export function parseRevSpec(value: string): RevSpec | null {
  const parsed = revSpecSchema.safeParse(value);
  if (!parsed.success) return null;
  const v = parsed.data;
  if (v === 'latest') return { kind: 'latest' };
  if (v === 'latest-release') return { kind: 'latest-release' };
  if (v.startsWith('release:')) return { kind: 'release', label: v.slice('release:'.length) };
  return { kind: 'number', number: Number(v) };
}

/** Query of the bundle endpoints. */
export const bundleQuerySchema = z
  .object({
    target: z.enum(TARGETS),
    /** `pinned` (default): the bundle first stored for the revision; `current`: this server's generator version. */
    generator: z.enum(['pinned', 'current']).default('pinned'),
  })
  .strict();

const parsedQueries = new Map<string, z.infer<typeof bundleQuerySchema>>();

/**
 * Parses the bundle query string (`?target=c`, or '' for none) with bundleQuerySchema (400 naming
 * the parameter), remembering the few distinct query strings CI sends so a busy URL is not
 * re-validated on every request.
 */
export function parseBundleQuery(search: string): z.infer<typeof bundleQuerySchema> {
  const known = parsedQueries.get(search);
  if (known) return known;
  const values: Record<string, string> = {};
  for (const [k, v] of new URLSearchParams(search)) values[k] = v;
  const parsed = bundleQuerySchema.safeParse(values);
  if (!parsed.success) throw zodToApiError(parsed.error);
  if (parsedQueries.size >= 64) parsedQueries.clear();
  parsedQueries.set(search, parsed.data);
  return parsed.data;
}

/** Whoever reads: a workspace member (by session) or a CI key. */
export type Reader = { kind: 'user'; userId: string; role: Role } | CiKeyPrincipal;

/** A reader with the workspace and controller it asked for. */
export interface ControllerAccess {
  reader: Reader;
  workspace: { id: string; slug: string; name: string };
  controller: ControllerRow;
}

/** The caller's credentials: the bearer token (null without an Authorization header) and the session user. */
export interface Credentials {
  bearer: string | null;
  userId: string | null;
}

/**
 * Loads a controller for a reader in one query: a bearer token wins over the session; an
 * unknown, revoked or out-of-scope key, a non-member, an anonymous caller and an unknown
 * workspace or controller all give 404. `action` is checked for members (keys only read).
 */
export async function requireControllerAccess(
  db: Db,
  credentials: Credentials,
  workspaceSlug: string,
  controllerSlug: string,
  action: Action = 'controller.read',
): Promise<ControllerAccess> {
  const notFound = () => fail.notFound('Controller');
  if (credentials.bearer !== null) {
    const secret = credentials.bearer;
    if (!secret.startsWith(CI_KEY_PREFIX) || secret.length > 200) throw notFound();
    const [row] = await db
      .select({ key: ciKeys, workspace: { id: workspaces.id, slug: workspaces.slug, name: workspaces.name }, controller: controllers })
      .from(ciKeys)
      .innerJoin(workspaces, eq(workspaces.id, ciKeys.workspaceId))
      .innerJoin(controllers, and(eq(controllers.workspaceId, workspaces.id), eq(controllers.slug, controllerSlug)))
      .where(and(eq(ciKeys.keyHash, ciKeyToHash(secret)), isNull(ciKeys.revokedAt), eq(workspaces.slug, workspaceSlug)));
    if (!row) throw notFound();
    const reader = ciKeyRowToPrincipal(row.key, row.workspace.slug);
    if (!keyCanRead(reader, row.controller.id) || !['controller.read', 'bundle.download'].includes(action)) throw notFound();
    return { reader, workspace: row.workspace, controller: row.controller };
  }
  if (!credentials.userId) throw notFound();
  const [row] = await db
    .select({ role: memberships.role, workspace: { id: workspaces.id, slug: workspaces.slug, name: workspaces.name }, controller: controllers })
    .from(workspaces)
    .innerJoin(memberships, and(eq(memberships.workspaceId, workspaces.id), eq(memberships.userId, credentials.userId)))
    .innerJoin(controllers, and(eq(controllers.workspaceId, workspaces.id), eq(controllers.slug, controllerSlug)))
    .where(eq(workspaces.slug, workspaceSlug));
  if (!row || !can(row.role, action)) throw notFound();
  return { reader: { kind: 'user', userId: credentials.userId, role: row.role }, workspace: row.workspace, controller: row.controller };
}

/** A revision named by a `{rev}`, with the release label it was reached through (if any). */
export interface ResolvedRevision {
  id: string;
  number: number;
  release: string | null;
}

/** Resolves a `{rev}` of a controller; 404 when there is no such revision or release. */
export async function resolveRevision(db: Db, controller: Pick<ControllerRow, 'id' | 'headRevision'>, spec: RevSpec): Promise<ResolvedRevision> {
  const r = await resolveRevisionWithBundle(db, controller, spec, null);
  return { id: r.id, number: r.number, release: r.release };
}

async function resolveRevisionWithBundle(
  db: Db,
  controller: Pick<ControllerRow, 'id' | 'headRevision'>,
  spec: RevSpec,
  bundle: { target: Target; choice: GeneratorChoice } | null,
): Promise<ResolvedRevision & { bundle: BundleMeta | null }> {
  // One query: the revision, the release it came through, and (optionally) its pinned bundle.
  const pinned = bundle
    ? db
        .select(bundleMetaColumns)
        .from(bundles)
        .where(
          and(
            eq(bundles.revisionId, revisions.id),
            eq(bundles.target, bundle.target),
            bundle.choice === 'current' ? eq(bundles.generatorVersion, CURRENT_GENERATOR_VERSION) : undefined,
          ),
        )
        .orderBy(asc(bundles.createdAt), asc(bundles.id))
        .limit(1)
        .as('pinned')
    : null;
  const fields = {
    id: revisions.id,
    number: revisions.number,
    ...(pinned
      ? {
          bId: sql<string | null>`${pinned.id}`,
          bTarget: sql<Target | null>`${pinned.target}`,
          bVersion: sql<string | null>`${pinned.generatorVersion}`,
          bSha: sql<string | null>`${pinned.sha256}`,
          bSize: sql<number | null>`${pinned.size}`,
          bCreated: sql<string | null>`${pinned.createdAt}`,
        }
      : {}),
  };
  const label = spec.kind === 'release' || spec.kind === 'latest-release';
  const base = db.select({ ...fields, release: label ? releases.label : sql<string | null>`null` }).from(revisions);
  const joined = label ? base.innerJoin(releases, eq(releases.revisionId, revisions.id)) : base;
  const withBundle = pinned ? joined.leftJoinLateral(pinned, sql`true`) : joined;
  let query;
  switch (spec.kind) {
    case 'number':
    case 'latest':
      query = withBundle.where(and(eq(revisions.controllerId, controller.id), eq(revisions.number, spec.kind === 'number' ? spec.number : controller.headRevision)));
      break;
    case 'release':
      query = withBundle.where(and(eq(releases.controllerId, controller.id), eq(releases.label, spec.label)));
      break;
    case 'latest-release':
      query = withBundle.where(eq(releases.controllerId, controller.id)).orderBy(desc(releases.publishedAt), desc(releases.id));
      break;
  }
  const [row] = (await query.limit(1)) as ({ id: string; number: number; release: string | null } & Record<string, unknown>)[];
  if (!row) throw fail.notFound(spec.kind === 'release' || spec.kind === 'latest-release' ? 'Release' : 'Revision');
  const found =
    row.bId !== undefined && row.bId !== null
      ? {
          id: row.bId as string,
          revisionId: row.id,
          target: row.bTarget as Target,
          generatorVersion: row.bVersion as string,
          sha256: row.bSha as string,
          size: Number(row.bSize),
          createdAt: new Date(String(row.bCreated)),
        }
      : null;
  return { id: row.id, number: row.number, release: row.release ?? null, bundle: found };
}

/** What a bundle request resolved to. */
export interface ResolvedBundle {
  access: ControllerAccess;
  revision: ResolvedRevision;
  bundle: BundleMeta;
  filename: string;
}

type BundleParams = { workspace: string; controller: string; rev: string; target: Target; generator: GeneratorChoice };

/** The download-cache key of a CI key's request (the key enters only as its sha256). */
function downloadCacheKey(bearer: string, params: BundleParams): string {
  return [ciKeyToHash(bearer), params.workspace, params.controller, params.rev, params.target, params.generator].join('|');
}

/** Resolves reader, controller, revision and bundle (generating it on first use); 404 on any miss. */
export async function resolveBundle(db: Db, credentials: Credentials, params: BundleParams): Promise<ResolvedBundle> {
  // CI keys hit the same URLs over and over: serve their resolutions from the epoch-checked cache.
  const cacheKey = credentials.bearer !== null ? downloadCacheKey(credentials.bearer, params) : null;
  if (cacheKey) {
    const hit = getCachedDownload<ResolvedBundle>(cacheKey);
    if (hit) return hit;
  }
  const spec = parseRevSpec(params.rev);
  if (!spec) throw fail.notFound('Revision');
  const epoch = readDownloadEpoch();
  const access = await requireControllerAccess(db, credentials, params.workspace, params.controller, 'bundle.download');
  const resolved = await resolveRevisionWithBundle(db, access.controller, spec, { target: params.target, choice: params.generator });
  let bundle = resolved.bundle;
  if (!bundle) {
    const [rev] = await db.select({ id: revisions.id, number: revisions.number, interchange: revisions.interchange }).from(revisions).where(eq(revisions.id, resolved.id));
    if (!rev) throw fail.notFound('Revision');
    bundle = await ensureBundle(db, rev, params.target, params.generator);
  }
  const result: ResolvedBundle = {
    access,
    revision: { id: resolved.id, number: resolved.number, release: resolved.release },
    bundle,
    filename: bundleFilename(access.controller.slug, resolved.number, params.target),
  };
  if (cacheKey) setCachedDownload(cacheKey, epoch, result);
  return result;
}

/** Records a download: throttled key use for CI keys, an audit entry for people. */
export async function recordDownload(db: Db, r: ResolvedBundle, what: 'bundle' | 'bundle.sha256', notModified: boolean): Promise<void> {
  const target = `${r.access.controller.slug}@r${r.revision.number}`;
  const detail = { target: r.bundle.target, sha256: r.bundle.sha256, ...(r.revision.release ? { release: r.revision.release } : {}), ...(notModified ? { notModified: true } : {}) };
  if (r.access.reader.kind === 'key') {
    await recordCiKeyUse(db, r.access.reader, { action: what === 'bundle' ? 'bundle.downloaded' : 'bundle.checksum', target, detail });
  } else if (what === 'bundle' && !notModified) {
    await recordAudit(db, { workspaceId: r.access.workspace.id, actorUserId: r.access.reader.userId, action: 'bundle.downloaded', target, detail });
  }
}

/** True when an If-None-Match header matches the ETag (`*`, a list, weak or strong). */
export function etagMatches(ifNoneMatch: string | null, etag: string): boolean {
  if (!ifNoneMatch) return false;
  if (ifNoneMatch.trim() === '*') return true;
  const bare = etag.replace(/^W\//, '');
  return ifNoneMatch.split(',').some((t) => t.trim().replace(/^W\//, '') === bare);
}

/** The quoted ETag of a bundle: its sha256. */
export function bundleEtag(sha256: string): string {
  return `"${sha256}"`;
}

/** The response headers every bundle answer carries. */
export function bundleHeaders(r: ResolvedBundle): Record<string, string> {
  return {
    ETag: bundleEtag(r.bundle.sha256),
    'X-Quiesce-Revision': String(r.revision.number),
    'X-Quiesce-Target': r.bundle.target,
    'X-Quiesce-Generator': r.bundle.generatorVersion,
    ...(r.revision.release ? { 'X-Quiesce-Release': r.revision.release } : {}),
    // Authorised content: private caches may keep it but must revalidate (latest moves on).
    'Cache-Control': 'private, no-cache',
    Vary: 'Authorization, Cookie',
  };
}

/** What a download asks for: the zip or its sha256sum line. */
export type DownloadKind = 'bundle' | 'bundle.sha256';

/** A download request as both the app's endpoints and the server's fast path see it. */
export interface DownloadRequest {
  what: DownloadKind;
  method: 'GET' | 'HEAD';
  /** The path segments, URL-decoded. */
  params: { workspace: string; controller: string; rev: string };
  /** The query string with its `?`, or ''. */
  search: string;
  ifNoneMatch: string | null;
}

/** A download answer as plain data, written out as a web Response or straight onto a node response. */
export interface DownloadAnswer {
  status: 200 | 304;
  headers: Record<string, string>;
  body: Uint8Array | string | null;
  resolved: ResolvedBundle;
}

/** Whether answering needs the zip's bytes: a bundle (not its checksum) the caller does not hold already. */
function needsBytes(r: ResolvedBundle, request: DownloadRequest): boolean {
  return request.what === 'bundle' && !etagMatches(request.ifNoneMatch, bundleEtag(r.bundle.sha256));
}

/** The answer to a resolved download: 304 when If-None-Match names the bundle, else the zip (`zip`, read when needsBytes) or checksum. */
function answerResolved(r: ResolvedBundle, request: DownloadRequest, zip: Uint8Array | null): DownloadAnswer {
  const headers = bundleHeaders(r);
  if (request.what === 'bundle.sha256') headers['Content-Type'] = 'text/plain; charset=utf-8';
  if (etagMatches(request.ifNoneMatch, bundleEtag(r.bundle.sha256))) return { status: 304, headers, body: null, resolved: r };
  if (request.what === 'bundle.sha256') return { status: 200, headers, body: `${r.bundle.sha256}  ${r.filename}\n`, resolved: r };
  headers['Content-Type'] = 'application/zip';
  headers['Content-Length'] = String(zip!.byteLength);
  headers['Content-Disposition'] = `attachment; filename="${r.filename}"`;
  return { status: 200, headers, body: request.method === 'HEAD' ? null : zip, resolved: r };
}

/**
 * Answers a download: resolves it (generating the bundle on first use), reads the bytes and
 * records the use. Throws ApiError (400 for a bad query, 404 for any miss).
 */
export async function answerDownload(db: Db, credentials: Credentials, request: DownloadRequest): Promise<DownloadAnswer> {
  const query = parseBundleQuery(request.search);
  const resolved = await resolveBundle(db, credentials, { ...request.params, ...query });
  const zip = needsBytes(resolved, request) ? await readBundleBytes(db, resolved.bundle) : null;
  const answer = answerResolved(resolved, request, zip);
  await recordDownload(db, resolved, request.what, answer.status === 304);
  return answer;
}

/**
 * Answers a CI key's download from the in-process caches alone (the epoch-checked resolution and
 * the stored bytes), or null when anything is missing, so the caller hands the request to the
 * app. The caller records the use (recordDownload) after answering.
 */
export function answerCachedDownload(bearer: string, request: DownloadRequest): DownloadAnswer | null {
  if (!bearer.startsWith(CI_KEY_PREFIX) || bearer.length > 200) return null;
  let query: z.infer<typeof bundleQuerySchema>;
  try {
    query = parseBundleQuery(request.search);
  } catch {
    return null; // the app answers the 400
  }
  const resolved = getCachedDownload<ResolvedBundle>(downloadCacheKey(bearer, { ...request.params, ...query }));
  if (!resolved) return null;
  const wantsBytes = needsBytes(resolved, request);
  const zip = wantsBytes ? (peekBundleBytes(resolved.bundle.sha256) ?? null) : null;
  if (wantsBytes && !zip) return null;
  return answerResolved(resolved, request, zip);
}

/** A download answer as a web Response. */
export function downloadAnswerToResponse(answer: DownloadAnswer): Response {
  return new Response(answer.body as BodyInit | null, { status: answer.status, headers: answer.headers });
}

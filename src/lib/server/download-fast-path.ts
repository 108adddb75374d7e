/**
 * The server's fast path for CI downloads. A CI farm fetches the same bundle URL with the same
 * key over and over; once the app has answered such a request, its resolution (key, scope,
 * revision, pinned bundle: epoch-checked, see download-cache.ts) and the bundle's bytes are in
 * process memory, and a repeat is answered here straight onto the node response, before the
 * framework's per-request pipeline, which costs more than the download itself. Anything not
 * fully cached (no bearer key, another URL, a percent-encoded path, a revoked key, evicted
 * bytes, a bad query) returns false and the app answers it, with every guard of the route.
 */
import type { IncomingMessage, ServerResponse } from 'node:http';
import { bearerOfHeader } from './ci-keys';
import type { Db } from './db';
import { answerCachedDownload, recordDownload, type DownloadKind } from './downloads';
import { SECURITY_HEADERS } from './http';

const BUNDLE_ROUTE = /^\/api\/v1\/workspaces\/([^/]+)\/controllers\/([^/]+)\/revisions\/([^/]+)\/(bundle|bundle\.sha256)$/;

/** A node request handler that answers a cached download and returns true, or returns false to pass the request on. */
export type DownloadFastPath = (req: IncomingMessage, res: ServerResponse) => boolean;

/** The fast path over the app's caches; `openDb` gives the database the key's use is recorded in. */
export function createDownloadFastPath(openDb: () => Promise<Db>): DownloadFastPath {
  return (req, res) => serveCachedDownload(req, res, openDb);
}

function serveCachedDownload(req: IncomingMessage, res: ServerResponse, openDb: () => Promise<Db>): boolean {
  const url = req.url;
  const method = req.method;
  if (!url?.startsWith('/api/v1/workspaces/') || (method !== 'GET' && method !== 'HEAD')) return false;
  const bearer = bearerOfHeader(req.headers.authorization);
  if (!bearer) return false;
  const q = url.indexOf('?');
  const pathname = q < 0 ? url : url.slice(0, q);
  const match = BUNDLE_ROUTE.exec(pathname);
  if (!match) return false;
  const what = match[4] as DownloadKind;
  if (what === 'bundle.sha256' && method === 'HEAD') return false;
  // Percent-encoded paths go to the app, whose router decodes them its own way (e.g. it keeps
  // %3A); CI sends plain slugs and labels.
  if (pathname.includes('%')) return false;
  const params = { workspace: match[1]!, controller: match[2]!, rev: match[3]! };
  const answer = answerCachedDownload(bearer, { what, method, params, search: q < 0 ? '' : url.slice(q), ifNoneMatch: req.headers['if-none-match'] ?? null });
  if (!answer) return false;
  res.writeHead(answer.status, { ...SECURITY_HEADERS, ...answer.headers });
  res.end(answer.body ?? undefined);
  // The key's last use is throttled to one write a minute, so this rarely touches the database.
  openDb()
    .then((db) => recordDownload(db, answer.resolved, what, answer.status === 304))
    .catch((error: unknown) => console.error('[quiesce] recording a download failed:', error instanceof Error ? error.message : error));
  return true;
}

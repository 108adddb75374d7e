/**
 * GET (and HEAD): the bundle zip of a revision for one target. {rev} is a number, latest,
 * latest-release or release:{label}; ?target=c|rust. Authorization: Bearer <CI key> or a
 * session cookie. ETag is the quoted sha256; If-None-Match answers 304. Any miss is 404.
 */
import type { APIRoute } from 'astro';
import { credentialsOf, dbOf, respond } from '../../../../../../../../../lib/server/api-v1';
import { parseBundleQuery, bundleResponse, recordDownload, resolveBundle } from '../../../../../../../../../lib/server/downloads';

const serve = (method: 'GET' | 'HEAD'): APIRoute => (ctx) =>
  respond(async () => {
    const db = dbOf(ctx);
    const query = parseBundleQuery(ctx.url);
    const resolved = await resolveBundle(db, credentialsOf(ctx), {
      workspace: String(ctx.params.workspace ?? ''),
      controller: String(ctx.params.controller ?? ''),
      rev: String(ctx.params.rev ?? ''),
      target: query.target,
      generator: query.generator,
    });
    const ifNoneMatch = ctx.request.headers.get('if-none-match');
    const response = await bundleResponse(db, resolved, ifNoneMatch, method);
    await recordDownload(db, resolved, 'bundle', response.status === 304);
    return response;
  });

export const GET = serve('GET');
export const HEAD = serve('HEAD');

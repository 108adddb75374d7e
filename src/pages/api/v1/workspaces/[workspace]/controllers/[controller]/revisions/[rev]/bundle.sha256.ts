/** GET: the bundle's checksum as `<sha256>  <filename>` (sha256sum format); same rules as …/bundle. */
import type { APIRoute } from 'astro';
import { credentialsOf, dbOf, respond } from '../../../../../../../../../lib/server/api-v1';
import { parseBundleQuery, checksumResponse, recordDownload, resolveBundle } from '../../../../../../../../../lib/server/downloads';

export const GET: APIRoute = (ctx) =>
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
    const response = checksumResponse(resolved, ctx.request.headers.get('if-none-match'));
    await recordDownload(db, resolved, 'bundle.sha256', response.status === 304);
    return response;
  });

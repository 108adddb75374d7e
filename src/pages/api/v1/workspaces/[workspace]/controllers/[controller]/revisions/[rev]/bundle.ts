/**
 * GET (and HEAD): the bundle zip of a revision for one target. {rev} is a number, latest,
 * latest-release or release:{label}; ?target=c|rust. Authorization: Bearer <CI key> or a
 * session cookie. ETag is the quoted sha256; If-None-Match answers 304. Any miss is 404.
 * (The production server answers repeated CI-key downloads before this route: see
 * lib/server/serve.ts.)
 */
import type { APIRoute } from 'astro';
import { credentialsOf, dbOf, downloadRequestOf, respond } from '../../../../../../../../../lib/server/api-v1';
import { answerDownload, downloadAnswerToResponse } from '../../../../../../../../../lib/server/downloads';

const serve = (method: 'GET' | 'HEAD'): APIRoute => (ctx) =>
  respond(async () => downloadAnswerToResponse(await answerDownload(dbOf(ctx), credentialsOf(ctx), downloadRequestOf(ctx, 'bundle', method))));

export const GET = serve('GET');
export const HEAD = serve('HEAD');

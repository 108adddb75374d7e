/** GET: the bundle's checksum as `<sha256>  <filename>` (sha256sum format); same rules as …/bundle. */
import type { APIRoute } from 'astro';
import { credentialsOf, dbOf, downloadRequestOf, respond } from '../../../../../../../../../lib/server/api-v1';
import { answerDownload, downloadAnswerToResponse } from '../../../../../../../../../lib/server/downloads';

export const GET: APIRoute = (ctx) =>
  respond(async () => downloadAnswerToResponse(await answerDownload(dbOf(ctx), credentialsOf(ctx), downloadRequestOf(ctx, 'bundle.sha256', 'GET'))));

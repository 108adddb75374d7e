/** GET: the controller's releases, newest first. POST {revision, label, notes?}: publish an approved revision (owners, reviewers). */
import type { APIRoute } from 'astro';
import { dbOf, guardController, guardRead, respond } from '../../../../../../../lib/server/api-v1';
import { json, readJson } from '../../../../../../../lib/server/http';
import { listReleases, publishRelease, publishReleaseSchema } from '../../../../../../../lib/server/releases';

export const GET: APIRoute = (ctx) =>
  respond(async () => {
    const { controller } = await guardRead(ctx);
    return json({ releases: await listReleases(dbOf(ctx), controller.id) });
  });

export const POST: APIRoute = (ctx) =>
  respond(async () => {
    const { member, controller } = await guardController(ctx, 'release.publish');
    const body = await readJson(ctx.request, publishReleaseSchema);
    return json(await publishRelease(dbOf(ctx), member, controller, body), 201);
  });

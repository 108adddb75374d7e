/** POST {verdict: approve|request_changes, comment?}: a reviewer's answer on the newest revision (owners, reviewers). */
import type { APIRoute } from 'astro';
import { dbOf, guardController, originOf, respond, revisionNumberOf } from '../../../../../../../../../lib/server/api-v1';
import { json, readJson } from '../../../../../../../../../lib/server/http';
import { decideReview, verdictSchema } from '../../../../../../../../../lib/server/reviews';

export const POST: APIRoute = (ctx) =>
  respond(async () => {
    const { member, controller } = await guardController(ctx, 'review.decide');
    const body = await readJson(ctx.request, verdictSchema);
    return json(await decideReview(dbOf(ctx), member, controller, revisionNumberOf(ctx), body, { origin: originOf(ctx), workspaceSlug: member.workspace.slug }));
  });

/** GET: the review panel of a revision (state, reviews, comments). POST {reviewers?, note?}: ask reviewers (editors, owners). */
import type { APIRoute } from 'astro';
import { dbOf, guardController, guardRead, originOf, respond, revisionNumberOf } from '../../../../../../../../../lib/server/api-v1';
import { json, readJson } from '../../../../../../../../../lib/server/http';
import { getReviewPanel, requestReview, requestReviewSchema } from '../../../../../../../../../lib/server/reviews';

export const GET: APIRoute = (ctx) =>
  respond(async () => {
    const { controller } = await guardRead(ctx);
    return json(await getReviewPanel(dbOf(ctx), controller, revisionNumberOf(ctx)));
  });

export const POST: APIRoute = (ctx) =>
  respond(async () => {
    const { member, controller } = await guardController(ctx, 'review.request');
    const body = await readJson(ctx.request, requestReviewSchema);
    const created = await requestReview(dbOf(ctx), member, controller, revisionNumberOf(ctx), body, { origin: originOf(ctx), workspaceSlug: member.workspace.slug });
    return json({ reviews: created }, 201);
  });

/** POST {body, cell?: {state, inputs}}: comment on a revision or one of its cells (owners, editors, reviewers). */
import type { APIRoute } from 'astro';
import { dbOf, guardController, respond, revisionNumberOf } from '../../../../../../../../../lib/server/api-v1';
import { json, readJson } from '../../../../../../../../../lib/server/http';
import { addComment, commentSchema } from '../../../../../../../../../lib/server/reviews';

export const POST: APIRoute = (ctx) =>
  respond(async () => {
    const { member, controller } = await guardController(ctx, 'review.comment');
    const body = await readJson(ctx.request, commentSchema);
    return json({ comment: await addComment(dbOf(ctx), member, controller, revisionNumberOf(ctx), body) }, 201);
  });

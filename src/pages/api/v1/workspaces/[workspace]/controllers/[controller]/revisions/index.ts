/**
 * GET: the controller's history: every revision with findings counts, review state, release labels and bundle hashes.
 * POST {base, source, message}: save a new revision (409 on a stale base, nothing stored).
 */
import type { APIRoute } from 'astro';
import { z } from 'zod';
import { dbOf, guardController, guardRead, respond } from '../../../../../../../../lib/server/api-v1';
import { listHistory } from '../../../../../../../../lib/server/history';
import { json, readJson } from '../../../../../../../../lib/server/http';
import { createRevision, MAX_UPLOAD_BYTES } from '../../../../../../../../lib/server/revisions';

const saveSchema = z
  .object({
    base: z.number().int().min(0),
    source: z.string().min(1, 'the source is empty'),
    message: z.string().trim().max(2000).default(''),
  })
  .strict();

export const GET: APIRoute = (ctx) =>
  respond(async () => {
    const { controller } = await guardRead(ctx);
    return json({ controller: { slug: controller.slug, name: controller.name, head: controller.headRevision }, revisions: await listHistory(dbOf(ctx), controller.id) });
  });

export const POST: APIRoute = (ctx) =>
  respond(async () => {
    const { member, controller } = await guardController(ctx, 'revision.save');
    const body = await readJson(ctx.request, saveSchema, { maxBytes: MAX_UPLOAD_BYTES * 2 + 64 * 1024 });
    const rev = await createRevision(dbOf(ctx), { controllerId: controller.id, baseNumber: body.base, source: body.source, message: body.message, author: member.userId, workspaceId: member.workspace.id });
    return json({ revision: { number: rev.number, base: rev.baseNumber, findings: rev.findings, source: rev.source, createdAt: rev.createdAt.toISOString() } }, 201);
  });

/** GET: the controller's revisions, newest first. POST {base, source, message}: save a new revision (409 on a stale base). */
import type { APIRoute } from 'astro';
import { z } from 'zod';
import { dbOf, guardController, handle } from '../../../../../../../lib/server/controller-api';
import { json, readJson } from '../../../../../../../lib/server/http';
import { createRevision, listRevisions, MAX_UPLOAD_BYTES } from '../../../../../../../lib/server/revisions';

const saveSchema = z
  .object({
    base: z.number().int().min(0),
    source: z.string().min(1, 'the source is empty'),
    message: z.string().trim().max(2000).default(''),
  })
  .strict();

export const GET: APIRoute = (ctx) =>
  handle(async () => {
    const { controller } = await guardController(ctx, 'controller.read');
    const rows = await listRevisions(dbOf(ctx), controller.id);
    return json({ revisions: rows.map((r) => ({ ...r, createdAt: r.createdAt.toISOString() })), head: controller.headRevision });
  });

export const POST: APIRoute = (ctx) =>
  handle(async () => {
    const { member, controller } = await guardController(ctx, 'revision.save');
    const body = await readJson(ctx.request, saveSchema, { maxBytes: MAX_UPLOAD_BYTES * 2 + 64 * 1024 });
    const rev = await createRevision(dbOf(ctx), { controllerId: controller.id, baseNumber: body.base, source: body.source, message: body.message, author: member.userId, workspaceId: member.workspace.id });
    return json({ revision: { number: rev.number, base: rev.baseNumber, findings: rev.findings, source: rev.source, createdAt: rev.createdAt.toISOString() } }, 201);
  });

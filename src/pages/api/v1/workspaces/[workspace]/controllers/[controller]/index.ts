/** GET: one controller with its head revision. PATCH: rename or archive/restore it. */
import type { APIRoute } from 'astro';
import { z } from 'zod';
import { renameController, setControllerArchived } from '../../../../../../../lib/server/controllers';
import { dbOf, guardController, respond } from '../../../../../../../lib/server/api-v1';
import { fail } from '../../../../../../../lib/server/errors';
import { json, readJson } from '../../../../../../../lib/server/http';
import { requireAction } from '../../../../../../../lib/server/permissions';
import { getHeadRevision } from '../../../../../../../lib/server/revisions';

const patchSchema = z
  .object({
    name: z.string().trim().min(1).max(80).optional(),
    archived: z.boolean().optional(),
  })
  .strict();

export const GET: APIRoute = (ctx) =>
  respond(async () => {
    const { member, controller: c } = await guardController(ctx, 'controller.read');
    const head = await getHeadRevision(dbOf(ctx), c.id);
    return json({
      controller: { id: c.id, slug: c.slug, name: c.name, description: c.description, head: c.headRevision, archived: c.archivedAt !== null },
      revision: head ? { number: head.number, source: head.source, findings: head.findings, message: head.message, author: head.authorName, createdAt: head.createdAt.toISOString() } : null,
      role: member.role,
    });
  });

export const PATCH: APIRoute = (ctx) =>
  respond(async () => {
    const { member, controller } = await guardController(ctx, 'controller.edit');
    const body = await readJson(ctx.request, patchSchema);
    if (body.name === undefined && body.archived === undefined) throw fail.badRequest('Nothing to change: send a name or archived.');
    let c = controller;
    if (body.name !== undefined) c = await renameController(dbOf(ctx), c, body.name, member.userId);
    if (body.archived !== undefined) {
      requireAction(member, 'controller.archive');
      c = await setControllerArchived(dbOf(ctx), c, body.archived, member.userId);
    }
    return json({ controller: { id: c.id, slug: c.slug, name: c.name, head: c.headRevision, archived: c.archivedAt !== null } });
  });

import type { APIRoute } from 'astro';
import { z } from 'zod';
import { json, readJson, requireUser } from '../../../../../lib/server/http';
import { actionsForRole, requireMember } from '../../../../../lib/server/permissions';
import { deleteWorkspace, renameWorkspace, workspaceNameSchema } from '../../../../../lib/server/workspaces';

/** A workspace with the caller's role and allowed actions (404 for non-members). */
export const GET: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  const m = await requireMember(ctx.locals.db, user.id, ctx.params.workspace ?? '');
  return json({
    workspace: { id: m.workspace.id, slug: m.workspace.slug, name: m.workspace.name, createdAt: m.workspace.createdAt },
    role: m.role,
    allowed: actionsForRole(m.role),
  });
};

/** Renames the workspace (owners). */
export const PATCH: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  const m = await requireMember(ctx.locals.db, user.id, ctx.params.workspace ?? '');
  const body = await readJson(ctx.request, z.object({ name: workspaceNameSchema }));
  const ws = await renameWorkspace(ctx.locals.db, m, body.name);
  return json({ workspace: { id: ws.id, slug: ws.slug, name: ws.name } });
};

/** Deletes the workspace and all its content (owners; body `{"confirm": "<slug>"}`). */
export const DELETE: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  const m = await requireMember(ctx.locals.db, user.id, ctx.params.workspace ?? '');
  const body = await readJson(ctx.request, z.object({ confirm: z.string().max(100) }));
  await deleteWorkspace(ctx.locals.db, m, body.confirm);
  return json({ ok: true });
};

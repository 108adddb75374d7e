import type { APIRoute } from 'astro';
import { json, readJson, requireUser } from '../../../../lib/server/http';
import { createWorkspace, createWorkspaceSchema, listWorkspacesForUser } from '../../../../lib/server/workspaces';

/** The caller's workspaces with role and counts. */
export const GET: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  return json({ workspaces: await listWorkspacesForUser(ctx.locals.db, user.id) });
};

/** Creates a workspace; the caller becomes its owner (address must be confirmed). */
export const POST: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  const body = await readJson(ctx.request, createWorkspaceSchema);
  const ws = await createWorkspace(ctx.locals.db, user, body);
  return json({ workspace: { id: ws.id, slug: ws.slug, name: ws.name } }, 201);
};

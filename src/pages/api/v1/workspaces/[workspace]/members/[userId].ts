import type { APIRoute } from 'astro';
import { z } from 'zod';
import { json, readJson, requireUser } from '../../../../../../lib/server/http';
import { requireMember } from '../../../../../../lib/server/permissions';
import { changeRole, removeMember, roleSchema } from '../../../../../../lib/server/workspaces';

/** Changes a member's role (owners; the last owner stays owner). */
export const PATCH: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  const m = await requireMember(ctx.locals.db, user.id, ctx.params.workspace ?? '');
  const body = await readJson(ctx.request, z.object({ role: roleSchema }));
  await changeRole(ctx.locals.db, m, ctx.params.userId ?? '', body.role);
  return json({ ok: true });
};

/** Removes a member (owners), or leaves the workspace when the id is the caller's own. */
export const DELETE: APIRoute = async (ctx) => {
  const user = requireUser(ctx);
  const m = await requireMember(ctx.locals.db, user.id, ctx.params.workspace ?? '');
  await removeMember(ctx.locals.db, m, ctx.params.userId ?? '');
  return json({ ok: true });
};

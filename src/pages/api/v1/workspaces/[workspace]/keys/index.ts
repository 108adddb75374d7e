/** GET: the workspace's CI keys (owners). POST {name, controllers?}: create one; the secret is in this answer only. */
import type { APIRoute } from 'astro';
import { dbOf, guardWorkspace, respond } from '../../../../../../lib/server/api-v1';
import { createCiKey, createCiKeySchema, listCiKeys } from '../../../../../../lib/server/ci-keys';
import { json, readJson } from '../../../../../../lib/server/http';

export const GET: APIRoute = (ctx) =>
  respond(async () => {
    const member = await guardWorkspace(ctx, 'keys.manage');
    return json({ keys: await listCiKeys(dbOf(ctx), member) });
  });

export const POST: APIRoute = (ctx) =>
  respond(async () => {
    const member = await guardWorkspace(ctx, 'keys.manage');
    const body = await readJson(ctx.request, createCiKeySchema);
    return json(await createCiKey(dbOf(ctx), member, body), 201);
  });

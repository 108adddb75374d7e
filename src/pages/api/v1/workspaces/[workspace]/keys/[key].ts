/** DELETE: revoke a CI key at once (owners). */
import type { APIRoute } from 'astro';
import { dbOf, guardWorkspace, respond } from '../../../../../../lib/server/api-v1';
import { revokeCiKey } from '../../../../../../lib/server/ci-keys';

export const DELETE: APIRoute = (ctx) =>
  respond(async () => {
    const member = await guardWorkspace(ctx, 'keys.manage');
    await revokeCiKey(dbOf(ctx), member, String(ctx.params.key ?? ''));
    return new Response(null, { status: 204 });
  });

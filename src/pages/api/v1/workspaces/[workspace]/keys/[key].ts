/** DELETE: revoke a CI key at once (owners). */
import type { APIRoute } from 'astro';
import { dbOf, guardWrite, respond } from '../../../../../../lib/server/api-v1';
import { revokeCiKey } from '../../../../../../lib/server/ci-keys';

export const DELETE: APIRoute = (ctx) =>
  respond(async () => {
    const member = await guardWrite(ctx, 'keys.manage');
    await revokeCiKey(dbOf(ctx), member, String(ctx.params.key ?? ''));
    return new Response(null, { status: 204 });
  });

/** GET: the controller's history: every revision with findings counts, review state, release labels and bundle hashes. */
import type { APIRoute } from 'astro';
import { dbOf, guardRead, respond } from '../../../../../../../../lib/server/api-v1';
import { listHistory } from '../../../../../../../../lib/server/history';
import { json } from '../../../../../../../../lib/server/http';

export const GET: APIRoute = (ctx) =>
  respond(async () => {
    const { controller } = await guardRead(ctx);
    return json({ controller: { slug: controller.slug, name: controller.name, head: controller.headRevision }, revisions: await listHistory(dbOf(ctx), controller.id) });
  });

import type { APIRoute } from 'astro';
import { fail } from '../../../../lib/server/errors';
import { json } from '../../../../lib/server/http';
import { getOutboxMessage } from '../../../../lib/server/mail';

/** One captured message with text and HTML parts. */
export const GET: APIRoute = async ({ locals, params }) => {
  if (!locals.outbox) throw fail.notFound('Outbox');
  const id = Number(params.id);
  const message = Number.isSafeInteger(id) && id > 0 ? await getOutboxMessage(locals.db, id) : null;
  if (!message) throw fail.notFound('Message');
  return json({ message });
};

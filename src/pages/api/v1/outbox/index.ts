import type { APIRoute } from 'astro';
import { fail } from '../../../../lib/server/errors';
import { json } from '../../../../lib/server/http';
import { listOutbox } from '../../../../lib/server/mail';

/** Captured messages, newest first (only where mail is captured locally); `?to=` filters by recipient. */
export const GET: APIRoute = async ({ locals, url }) => {
  if (!locals.outbox) throw fail.notFound('Outbox');
  const to = url.searchParams.get('to') ?? undefined;
  return json({ messages: await listOutbox(locals.db, { to, limit: 200 }) });
};

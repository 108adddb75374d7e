import type { APIRoute } from 'astro';
import { getDatabase } from '../../lib/server/db';
import { json } from '../../lib/server/http';

/** Readiness: the database is open and migrated (scripts/start.mjs and the e2e tests wait for this). */
export const GET: APIRoute = async ({ locals }) => {
  const handle = await getDatabase();
  return json({ ok: true, backend: handle.backend, demo: locals.demo });
};

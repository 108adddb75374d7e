import type { APIRoute } from 'astro';
import { json } from '../../../lib/server/http';

/** The signed-in user (null when anonymous) and whether the server runs in demo mode. */
export const GET: APIRoute = ({ locals }) => json({ user: locals.user, demo: locals.demo });

/** GET: the OpenAPI 3 document of the v1 API, generated from the endpoints' zod schemas. */
import type { APIRoute } from 'astro';
import { respond } from '../../../lib/server/api-v1';
import { buildOpenApiDocument } from '../../../lib/server/openapi';

export const GET: APIRoute = () =>
  respond(async () =>
    new Response(JSON.stringify(buildOpenApiDocument(), null, 2), {
      status: 200,
      headers: { 'Content-Type': 'application/json; charset=utf-8', 'Cache-Control': 'public, max-age=300' },
    }),
  );

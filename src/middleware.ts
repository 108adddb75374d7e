/**
 * Runs before every page and endpoint: opens the database, reads the session
 * cookie into Astro.locals, refuses cross-origin API writes, adds security
 * headers, and turns every thrown error into a proper answer (JSON for /api,
 * a page otherwise), never a stack trace.
 */
import { defineMiddleware } from 'astro:middleware';
import type { APIContext } from 'astro';
import { readConfig } from './lib/server/config';
import { getDb } from './lib/server/db';
import { ApiError, jsonError, toApiError } from './lib/server/errors';
import { SECURITY_HEADERS } from './lib/server/http';
import { escapeHtml } from './lib/server/mail-templates';
import { SESSION_COOKIE, validateSession } from './lib/server/session';

const UNSAFE_METHODS = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

// Scripts: 'self' plus inline (the theme bootstrap and Astro's hoisted island scripts),
// wasm for the engine in the browser; workers may come from blob: (editor workers).
const CSP = [
  "default-src 'self'",
  "script-src 'self' 'unsafe-inline' 'wasm-unsafe-eval'",
  "style-src 'self' 'unsafe-inline'",
  "img-src 'self' data: blob:",
  "font-src 'self' data:",
  "connect-src 'self'",
  "worker-src 'self' blob:",
  "frame-src 'self'",
  "frame-ancestors 'self'",
  "base-uri 'self'",
  "form-action 'self'",
  "object-src 'none'",
].join('; ');

function withSecurityHeaders(response: Response): Response {
  const headers: Record<string, string> = { ...SECURITY_HEADERS };
  const type = response.headers.get('content-type') ?? '';
  if (type.startsWith('text/html')) headers['Content-Security-Policy'] = CSP;
  try {
    for (const [k, v] of Object.entries(headers)) if (!response.headers.has(k)) response.headers.set(k, v);
    return response;
  } catch {
    // Immutable headers (e.g. Response.redirect): copy into a new response.
    const copy = new Response(response.body, response);
    for (const [k, v] of Object.entries(headers)) if (!copy.headers.has(k)) copy.headers.set(k, v);
    return copy;
  }
}

function plainPage(status: number, title: string, message: string): Response {
  const html = `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>${escapeHtml(title)} · Quiesce</title>
<style>body{font-family:system-ui,sans-serif;background:#f6f5f1;color:#1b2230;margin:0;padding:3rem 1rem}main{max-width:36rem;margin:0 auto}a{color:#0b6b66}@media (prefers-color-scheme:dark){body{background:#0f141a;color:#e4e8ec}a{color:#52c7bc}}</style></head>
<body><main><h1>${escapeHtml(title)}</h1><p>${escapeHtml(message)}</p><p><a href="/">Quiesce home</a></p></main></body></html>`;
  return new Response(html, { status, headers: { 'Content-Type': 'text/html; charset=utf-8', 'Cache-Control': 'no-store' } });
}

function isDatabaseUnavailable(error: unknown): error is Error {
  return error instanceof Error && error.name === 'DataDirLockedError';
}

async function answerError(context: APIContext, error: unknown, isApi: boolean): Promise<Response> {
  if (isDatabaseUnavailable(error)) {
    console.error(`[quiesce] ${error.message}`);
    return isApi
      ? jsonError(new ApiError(503, 'database_unavailable', error.message))
      : plainPage(503, 'Database unavailable', error.message);
  }
  if (isApi) return jsonError(error);
  const apiError = toApiError(error);
  if (apiError.status === 401) {
    const next = `${context.url.pathname}${context.url.search}`;
    return context.redirect(`/auth/sign-in?next=${encodeURIComponent(next)}`, 303);
  }
  if (apiError.status === 404) return context.rewrite('/404');
  if (apiError.status === 403) return context.rewrite('/403');
  if (apiError.status >= 500) {
    console.error('[quiesce] unexpected error:', error);
    return plainPage(500, 'Something went wrong', 'The server could not finish this request. The error was logged.');
  }
  return plainPage(apiError.status, 'Request not accepted', apiError.message);
}

let warnedAboutMail = false;

export const onRequest = defineMiddleware(async (context, next) => {
  const config = readConfig();
  if (config.captureMail && !config.demo && !warnedAboutMail) {
    warnedAboutMail = true;
    console.warn('[quiesce] SMTP_URL is not set and demo mode is off: e-mail is stored in the outbox table only and nobody receives it.');
  }
  const { pathname } = context.url;
  const isApi = pathname.startsWith('/api/');
  context.locals.user = null;
  context.locals.session = null;
  context.locals.demo = config.demo;
  context.locals.outbox = config.showOutbox;
  try {
    const db = await getDb();
    context.locals.db = db;
    const sessionId = context.cookies.get(SESSION_COOKIE)?.value;
    if (sessionId) {
      const result = await validateSession(db, sessionId);
      context.locals.user = result.user;
      context.locals.session = result.session;
      if (result.cookie) context.cookies.set(result.cookie.name, result.cookie.value, result.cookie.attributes);
    }
    if (isApi && UNSAFE_METHODS.has(context.request.method)) {
      // Astro's checkOrigin covers form encodings; this covers JSON and every other type.
      const origin = context.request.headers.get('origin');
      if (origin && origin !== context.url.origin) {
        return jsonError(new ApiError(403, 'cross_origin', 'Cross-site requests are not accepted.'));
      }
    }
    return withSecurityHeaders(await next());
  } catch (error) {
    return withSecurityHeaders(await answerError(context, error, isApi));
  }
});

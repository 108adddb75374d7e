/** Helpers for thin endpoints and form pages: JSON answers, body parsing, the caller. */
import type { APIContext, AstroGlobal } from 'astro';
import type { z, ZodTypeAny } from 'zod';
import { readConfig } from './config';
import { ApiError, fail, toApiError, zodToApiError } from './errors';
import type { SessionUser } from './session';

type Ctx = Pick<APIContext, 'request' | 'url' | 'locals' | 'clientAddress'> | AstroGlobal;

/** Headers on every answer, pages and API alike (the middleware adds a CSP to HTML on top). */
export const SECURITY_HEADERS: Readonly<Record<string, string>> = {
  'X-Content-Type-Options': 'nosniff',
  'Referrer-Policy': 'same-origin',
  'Cross-Origin-Opener-Policy': 'same-origin',
};

/** Default limit of a JSON request body. */
export const MAX_JSON_BYTES = 1024 * 1024;

/** A JSON response (no caching). */
export function json(data: unknown, init: number | ResponseInit = 200): Response {
  const base: ResponseInit = typeof init === 'number' ? { status: init } : init;
  const headers = new Headers(base.headers);
  headers.set('Content-Type', 'application/json; charset=utf-8');
  if (!headers.has('Cache-Control')) headers.set('Cache-Control', 'no-store');
  return new Response(JSON.stringify(data), { ...base, headers });
}

/** Reads a request body as text, refusing more than maxBytes with 413. */
export async function readBodyText(request: Request, maxBytes: number): Promise<string> {
  const declared = Number(request.headers.get('content-length') ?? '0');
  if (declared > maxBytes) throw fail.tooLarge(`The request body is larger than ${maxBytes} bytes.`);
  if (!request.body) return '';
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.byteLength;
    if (total > maxBytes) {
      await reader.cancel().catch(() => undefined);
      throw fail.tooLarge(`The request body is larger than ${maxBytes} bytes.`);
    }
    chunks.push(value);
  }
  return new TextDecoder('utf-8', { fatal: false }).decode(Buffer.concat(chunks));
}

/** Parses a JSON body against a zod schema: 415 for another content type, 400 for bad JSON or values, 413 when too large. */
export async function readJson<S extends ZodTypeAny>(
  request: Request,
  schema: S,
  options: { maxBytes?: number } = {},
): Promise<z.infer<S>> {
  const type = request.headers.get('content-type') ?? '';
  if (!/^application\/(?:[\w.+-]+\+)?json\b/i.test(type)) {
    throw new ApiError(415, 'unsupported_media_type', 'Send the body as JSON (Content-Type: application/json).');
  }
  const text = await readBodyText(request, options.maxBytes ?? MAX_JSON_BYTES);
  let value: unknown;
  try {
    value = text.trim() === '' ? {} : JSON.parse(text);
  } catch (error) {
    const detail = error instanceof Error ? error.message : 'parse error';
    throw new ApiError(400, 'malformed_json', `The body is not valid JSON: ${detail}`);
  }
  const parsed = schema.safeParse(value);
  if (!parsed.success) throw zodToApiError(parsed.error);
  return parsed.data;
}

/** Result of parsing a submitted form: data, or the first problem with its field. */
export type FormResult<T> = { ok: true; data: T } | { ok: false; message: string; field?: string | undefined };

/** Parses form fields against a zod schema (for pages that handle their own POST). */
export function parseForm<S extends ZodTypeAny>(form: FormData, schema: S): FormResult<z.infer<S>> {
  const values: Record<string, string> = {};
  for (const [key, value] of form.entries()) if (typeof value === 'string') values[key] = value;
  const parsed = schema.safeParse(values);
  if (parsed.success) return { ok: true, data: parsed.data };
  const error = zodToApiError(parsed.error);
  return { ok: false, message: error.message.replace(/^[\w.]+: /, ''), field: error.field };
}

/** Turns an expected error (4xx, zod, constraint clash) into a form message; rethrows unexpected ones. */
export function errorToFormResult(error: unknown): { ok: false; message: string; field?: string | undefined } {
  const apiError = toApiError(error);
  if (apiError.status < 500) return { ok: false, message: apiError.message.replace(/^[\w.]+: /, ''), field: apiError.field };
  throw error;
}

/** The signed-in user, or 401. */
export function requireUser(ctx: Pick<Ctx, 'locals'>): SessionUser {
  const user = ctx.locals.user;
  if (!user) throw fail.unauthenticated();
  return user;
}

/** The rate-limit key of the caller (its IP address). */
export function clientKey(ctx: Pick<Ctx, 'clientAddress'>): string {
  try {
    return ctx.clientAddress || 'unknown';
  } catch {
    return 'unknown';
  }
}

/** The origin to put into e-mailed links: PUBLIC_ORIGIN, else the origin of this request. */
export function linkOrigin(ctx: Pick<Ctx, 'url'>): string {
  return readConfig().publicOrigin ?? ctx.url.origin;
}

/** A safe same-site path to return to after sign-in (anything else becomes fallback). */
export function safeNext(value: string | null | undefined, fallback = '/workspaces'): string {
  if (!value || !value.startsWith('/') || value.startsWith('//') || value.startsWith('/\\')) return fallback;
  return value;
}

/** Default limit of a submitted form. */
export const MAX_FORM_BYTES = 64 * 1024;

/** Reads a submitted form: 413 when too large, 400 when it cannot be decoded. */
export async function readFormData(request: Request, maxBytes = MAX_FORM_BYTES): Promise<FormData> {
  const declared = Number(request.headers.get('content-length') ?? '0');
  if (declared > maxBytes) throw fail.tooLarge(`The form is larger than ${maxBytes} bytes.`);
  try {
    return await request.formData();
  } catch {
    throw fail.badRequest('The form could not be read; submit it from the page again.', undefined, 'malformed_form');
  }
}

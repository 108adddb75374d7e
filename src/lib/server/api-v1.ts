/**
 * Shared pieces of the v1 endpoints: answering thrown errors as JSON, reading the caller's
 * credentials, guards, and path and query parsing. Reads through guardRead accept a session or a
 * CI key and answer 404 for anyone who may not see the resource; guardWorkspace and
 * guardController need a member's session (401 without one, 404 for non-members, 403 for a role
 * that may not).
 */
import type { APIContext } from 'astro';
import { z, type ZodTypeAny } from 'zod';
import { readBearer } from './ci-keys';
import { requireController } from './controllers';
import type { Db } from './db';
import { fail, jsonError, zodToApiError } from './errors';
import { linkOrigin } from './http';
import { requireControllerAccess, type ControllerAccess, type Credentials, type DownloadKind, type DownloadRequest } from './downloads';
import { requireMemberAction, type Action, type MemberContext } from './permissions';
import type { ControllerRow } from './schema';

type Ctx = Pick<APIContext, 'request' | 'params' | 'locals' | 'url'>;

/** Runs an endpoint body and answers any thrown error as `{"error": …}` JSON. */
export async function respond(fn: () => Promise<Response>): Promise<Response> {
  try {
    return await fn();
  } catch (error) {
    return jsonError(error);
  }
}

/** The database of this request (opened by the middleware). */
export function dbOf(ctx: Pick<APIContext, 'locals'>): Db {
  return ctx.locals.db;
}

/** The caller's credentials: a bearer token (if any) and the session user. */
export function credentialsOf(ctx: Pick<APIContext, 'request' | 'locals'>): Credentials {
  return { bearer: readBearer(ctx.request), userId: ctx.locals.user?.id ?? null };
}

/** The download a bundle route was asked for (path segments as Astro decoded them). */
export function downloadRequestOf(ctx: Pick<APIContext, 'request' | 'params' | 'url'>, what: DownloadKind, method: 'GET' | 'HEAD'): DownloadRequest {
  return {
    what,
    method,
    params: { workspace: String(ctx.params.workspace ?? ''), controller: String(ctx.params.controller ?? ''), rev: String(ctx.params.rev ?? '') },
    search: ctx.url.search,
    ifNoneMatch: ctx.request.headers.get('if-none-match'),
  };
}

/** Guards a read of a controller: member or CI key of the workspace, else 404. */
export async function guardRead(ctx: Ctx, action: Action = 'controller.read'): Promise<ControllerAccess> {
  return requireControllerAccess(dbOf(ctx), credentialsOf(ctx), String(ctx.params.workspace ?? ''), String(ctx.params.controller ?? ''), action);
}

/** Guards a workspace route: a signed-in member (401, 404) whose role allows `action` (403); CI keys get 401. */
export async function guardWorkspace(ctx: Ctx, action: Action): Promise<MemberContext> {
  const userId = ctx.locals.user?.id;
  if (!userId) throw fail.unauthenticated(readBearer(ctx.request) !== null ? 'A CI key only downloads and reads; sign in to do this.' : undefined);
  return requireMemberAction(dbOf(ctx), userId, String(ctx.params.workspace ?? ''), action);
}

/** guardWorkspace plus the controller named in the path (404 when it is not in the workspace). */
export async function guardController(ctx: Ctx, action: Action): Promise<{ member: MemberContext; controller: ControllerRow }> {
  const member = await guardWorkspace(ctx, action);
  const controller = await requireController(dbOf(ctx), member.workspace.id, String(ctx.params.controller ?? ''));
  return { member, controller };
}

/** Parses the query string against a zod schema (400 naming the parameter). */
export function parseQuery<S extends ZodTypeAny>(url: URL, schema: S): z.infer<S> {
  const values: Record<string, string> = {};
  for (const [k, v] of url.searchParams) values[k] = v;
  const parsed = schema.safeParse(values);
  if (!parsed.success) throw zodToApiError(parsed.error);
  return parsed.data;
}

/** A positive revision number in a path or query. */
export const revisionNumberSchema = z.coerce.number().int().min(1).max(1_000_000);

/** A revision number from the `{rev}` path segment of a review route (404 when not a number). */
export function revisionNumberOf(ctx: Pick<APIContext, 'params'>): number {
  const raw = String(ctx.params.rev ?? '');
  if (!/^[1-9][0-9]{0,6}$/.test(raw)) throw fail.notFound('Revision');
  return Number(raw);
}

/** Where e-mailed links point: PUBLIC_ORIGIN, else this request's origin. */
export function originOf(ctx: Pick<APIContext, 'url'>): string {
  return linkOrigin(ctx);
}

/**
 * Shared pieces of the controller and revision endpoints: the member/controller guard and an
 * error answer that keeps the extra facts of a stale-base 409 (head) and a bad source (issues).
 */
import type { APIContext } from 'astro';
import { z } from 'zod';
import { dbOf } from './api-v1';
import { requireController } from './controllers';
import { jsonError, toApiError } from './errors';
import { requireMemberAction, type Action, type MemberContext } from './permissions';
import { SourceError, StaleBaseError } from './revisions';
import type { ControllerRow } from './schema';

/** A positive revision number in a path or query. */
export const revisionNumberSchema = z.coerce.number().int().min(1).max(1_000_000);

export { dbOf };

/** Guards a workspace route: signed in (401), member (404), role allows `action` (403). */
export async function guardWorkspace(ctx: Pick<APIContext, 'locals' | 'params'>, action: Action): Promise<MemberContext> {
  return requireMemberAction(dbOf(ctx), ctx.locals.user?.id, String(ctx.params.workspace ?? ''), action);
}

/** Guards a controller route and loads the controller (404 when it is not in the workspace). */
export async function guardController(ctx: Pick<APIContext, 'locals' | 'params'>, action: Action): Promise<{ member: MemberContext; controller: ControllerRow }> {
  const member = await guardWorkspace(ctx, action);
  const controller = await requireController(dbOf(ctx), member.workspace.id, String(ctx.params.controller ?? ''));
  return { member, controller };
}

/** The JSON error answer, with `head` for stale bases and `issues` for located source problems. */
export function answerError(e: unknown): Response {
  if (e instanceof StaleBaseError || e instanceof SourceError) {
    const a = toApiError(e);
    const body = {
      error: {
        code: a.code,
        message: a.message,
        ...(a.field ? { field: a.field } : {}),
        ...(e instanceof StaleBaseError ? { head: e.head, base: e.base } : { issues: e.issues.slice(0, 50) }),
      },
    };
    return new Response(JSON.stringify(body), { status: a.status, headers: { 'Content-Type': 'application/json; charset=utf-8', 'Cache-Control': 'no-store', ...a.headers } });
  }
  return jsonError(e);
}

/** Runs an endpoint body and answers any thrown error as JSON. */
export async function handle(fn: () => Promise<Response>): Promise<Response> {
  try {
    return await fn();
  } catch (e) {
    return answerError(e);
  }
}

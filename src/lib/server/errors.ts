import { DrizzleQueryError } from 'drizzle-orm/errors';
import { ZodError } from 'zod';

/** HTTP statuses the API answers with for expected failures. */
export type ErrorStatus = 400 | 401 | 403 | 404 | 409 | 413 | 415 | 422 | 429 | 500 | 503;

/** The JSON body of every error answer. */
export type ErrorBody = { error: { code: string; message: string; field?: string } & Record<string, unknown> };

/** An expected failure with its HTTP status; thrown by server modules, answered by endpoints. */
export class ApiError extends Error {
  readonly status: ErrorStatus;
  readonly code: string;
  readonly field: string | undefined;
  readonly headers: Record<string, string>;
  /** Extra facts for the JSON body (e.g. the head of a stale base, a source's located issues). */
  readonly details: Record<string, unknown>;

  constructor(
    status: ErrorStatus,
    code: string,
    message: string,
    options: { field?: string | undefined; headers?: Record<string, string>; details?: Record<string, unknown> } = {},
  ) {
    super(message);
    this.name = 'ApiError';
    this.status = status;
    this.code = code;
    this.field = options.field;
    this.headers = options.headers ?? {};
    this.details = options.details ?? {};
  }
}

/** Shorthand constructors for the usual failures. */
export const fail = {
  /** 400: the request is malformed or a value is invalid. */
  badRequest: (message: string, field?: string, code = 'invalid') => new ApiError(400, code, message, { field }),
  /** 401: sign-in is required. */
  unauthenticated: (message = 'Sign in to continue.') => new ApiError(401, 'unauthenticated', message),
  /** 403: signed in and a member, but the role does not allow this. */
  forbidden: (message = 'Your role does not allow this.') => new ApiError(403, 'forbidden', message),
  /** 404: no such resource, or not visible to this user. */
  notFound: (what = 'Resource') => new ApiError(404, 'not_found', `${what} not found.`),
  /** 409: the request clashes with the current state. */
  conflict: (message: string, field?: string, code = 'conflict') => new ApiError(409, code, message, { field }),
  /** 413: the body is too large. */
  tooLarge: (message: string) => new ApiError(413, 'too_large', message),
  /** 429: too many attempts. */
  rateLimited: (retryAfterSeconds: number) =>
    new ApiError(429, 'rate_limited', `Too many attempts. Try again in ${Math.max(1, Math.ceil(retryAfterSeconds))} s.`, {
      headers: { 'Retry-After': String(Math.max(1, Math.ceil(retryAfterSeconds))) },
    }),
};

type PgErrorLike = { code?: unknown; constraint?: unknown; column?: unknown; detail?: unknown; message?: unknown };

/** Friendly messages for named unique constraints (schema.ts), keyed by constraint name. */
const UNIQUE_MESSAGES: Record<string, { message: string; field?: string }> = {
  users_email_key: { message: 'An account with this e-mail address already exists.', field: 'email' },
  workspaces_slug_key: { message: 'A workspace with this short name already exists.', field: 'slug' },
  memberships_pkey: { message: 'This person is already a member of the workspace.', field: 'email' },
  invites_open_key: { message: 'This address already has an open invitation.', field: 'email' },
  controllers_workspace_slug_key: { message: 'A controller with this short name already exists here.', field: 'slug' },
  revisions_controller_number_key: { message: 'This revision number was just taken by another save.', field: 'base' },
  releases_controller_label_key: { message: 'This release label is already used for the controller.', field: 'label' },
  bundles_revision_target_version_key: { message: 'This bundle already exists.' },
};

function findPgCause(error: unknown): PgErrorLike | null {
  let current: unknown = error;
  for (let depth = 0; depth < 5 && current && typeof current === 'object'; depth += 1) {
    const code = (current as PgErrorLike).code;
    if (typeof code === 'string' && /^[0-9A-Z]{5}$/.test(code)) return current as PgErrorLike;
    current = (current as { cause?: unknown }).cause;
  }
  return null;
}

/** Maps database, validation and unknown errors to an ApiError (unknown ones become a generic 500). */
export function toApiError(error: unknown): ApiError {
  if (error instanceof ApiError) return error;
  if (error instanceof ZodError) return zodToApiError(error);
  const cause = error instanceof DrizzleQueryError || findPgCause(error) ? findPgCause(error) : null;
  if (cause && typeof cause.code === 'string') {
    const constraint = typeof cause.constraint === 'string' ? cause.constraint : '';
    switch (cause.code) {
      case '23505': {
        const known = UNIQUE_MESSAGES[constraint];
        return new ApiError(409, 'already_exists', known?.message ?? 'This already exists.', { field: known?.field });
      }
      case '23503':
        return new ApiError(400, 'invalid_reference', 'A referenced item does not exist (or is still in use).');
      case '23502':
        return new ApiError(400, 'missing_value', 'A required value is missing.', {
          field: typeof cause.column === 'string' ? cause.column : undefined,
        });
      case '23514':
        return new ApiError(400, 'invalid', 'A value is outside the allowed range.');
      case '22P02':
      case '22007':
      case '22008':
      case '22003':
      case '22001':
        return new ApiError(400, 'invalid', 'A value has the wrong form or is too large.');
      case '40001':
      case '40P01':
        return new ApiError(409, 'retry', 'A concurrent change got in the way; try again.');
      case 'Q0001':
        return new ApiError(409, 'immutable', typeof cause.message === 'string' ? cause.message : 'History is immutable.');
      default:
        break;
    }
  }
  return new ApiError(500, 'internal', 'Something went wrong on the server. The error was logged.');
}

/** Converts a zod error into a 400 naming the first offending field (as a dotted path). */
export function zodToApiError(error: ZodError): ApiError {
  const issue = error.issues[0];
  const field = issue && issue.path.length > 0 ? issue.path.join('.') : undefined;
  const message = issue ? (field ? `${field}: ${issue.message}` : issue.message) : 'Invalid input.';
  return new ApiError(400, 'invalid', message, { field });
}

/** Builds the JSON error Response `{"error":{code,message,field?}}` for any thrown value. */
export function jsonError(error: unknown): Response {
  const apiError = toApiError(error);
  if (apiError.status === 500) console.error('[quiesce] unexpected error:', error);
  const body: ErrorBody = { error: { code: apiError.code, message: apiError.message, ...apiError.details } };
  if (apiError.field) body.error.field = apiError.field;
  return new Response(JSON.stringify(body), {
    status: apiError.status,
    headers: { 'Content-Type': 'application/json; charset=utf-8', 'Cache-Control': 'no-store', ...apiError.headers },
  });
}

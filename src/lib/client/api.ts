/** Fetch helpers for /api/*: JSON in and out, and errors as ApiClientError with the server's code, field and extras. */

/** An error answer of the API, as the client sees it. */
export class ApiClientError extends Error {
  readonly status: number;
  readonly code: string;
  readonly field: string | undefined;
  /** The whole `error` object, including extras such as `head` (stale base) or `issues` (bad source). */
  readonly detail: Record<string, unknown>;
  constructor(status: number, detail: Record<string, unknown>) {
    super(typeof detail.message === 'string' ? detail.message : `Request failed (${status}).`);
    this.name = 'ApiClientError';
    this.status = status;
    this.code = typeof detail.code === 'string' ? detail.code : 'error';
    this.field = typeof detail.field === 'string' ? detail.field : undefined;
    this.detail = detail;
  }
}

async function errorOf(res: Response): Promise<ApiClientError> {
  let detail: Record<string, unknown> = { code: 'http_error', message: `The server answered ${res.status}.` };
  try {
    const body = (await res.json()) as { error?: Record<string, unknown> };
    if (body && typeof body.error === 'object' && body.error) detail = body.error;
  } catch {
    // not JSON: keep the generic message
  }
  if (res.status === 401) detail = { ...detail, message: 'Your session has ended. Sign in again in another tab; your edits are kept here as a draft.' };
  return new ApiClientError(res.status, detail);
}

/** Sends a JSON request and parses the JSON answer; throws ApiClientError for non-2xx. */
export async function apiJson<T>(path: string, init: { method?: string; body?: unknown; signal?: AbortSignal } = {}): Promise<T> {
  const res = await fetch(path, {
    method: init.method ?? (init.body === undefined ? 'GET' : 'POST'),
    headers: init.body === undefined ? { Accept: 'application/json' } : { 'Content-Type': 'application/json', Accept: 'application/json' },
    body: init.body === undefined ? null : JSON.stringify(init.body),
    credentials: 'same-origin',
    ...(init.signal ? { signal: init.signal } : {}),
  });
  if (!res.ok) throw await errorOf(res);
  return (await res.json()) as T;
}

/** Fetches binary content (e.g. a zip); throws ApiClientError for non-2xx. */
export async function apiBlob(path: string, init: { method?: string; body?: unknown } = {}): Promise<{ blob: Blob; filename: string | null }> {
  const res = await fetch(path, {
    method: init.method ?? (init.body === undefined ? 'GET' : 'POST'),
    headers: init.body === undefined ? {} : { 'Content-Type': 'application/json' },
    body: init.body === undefined ? null : JSON.stringify(init.body),
    credentials: 'same-origin',
  });
  if (!res.ok) throw await errorOf(res);
  const cd = res.headers.get('content-disposition') ?? '';
  const m = /filename="([^"]+)"/.exec(cd);
  return { blob: await res.blob(), filename: m ? m[1]! : null };
}

/** The API base path of a workspace's controllers. */
export function controllersPath(workspace: string): string {
  return `/api/v1/workspaces/${encodeURIComponent(workspace)}/controllers`;
}

/** The API base path of one controller. */
export function controllerPath(workspace: string, controller: string): string {
  return `${controllersPath(workspace)}/${encodeURIComponent(controller)}`;
}

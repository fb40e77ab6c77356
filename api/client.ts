/**
 * The one fetch wrapper of the Keelson client. Same-origin, cookie session, CSRF token in
 * `x-csrf-token` on every state-changing request (fetched once, refetched after sign-out and
 * once on a `csrf_invalid` 403). Success bodies are parsed with the caller's zod schema; every
 * failure (error envelope, unexpected body, network) comes out as a `KeelsonApiError`.
 *
 * Creating requests can carry an `Idempotency-Key` header: make one key per user action with
 * `newIdempotencyKey()` and pass it as `idempotencyKey` (or use `post`). The key is sent again on
 * the CSRF retry below, so the server answers a repeated request with the first response instead
 * of creating the thing twice.
 */
import type { ZodType } from 'zod';
import { KeelsonApiError, type ErrorCode } from '../shared/errors';
import { csrfResponseSchema } from '../shared/auth';
import { readErrorEnvelope, sendApiRequest, type HttpMethod } from '../shared/http-core';

// The HTTP core (request building, fetch, envelope parsing) is shared with the command line.
export { newIdempotencyKey, type HttpMethod } from '../shared/http-core';

export interface ApiRequestOptions<T> {
  method?: HttpMethod;
  /** JSON body (objects) or FormData (uploads). */
  body?: unknown;
  /** Schema for a success body; omit for 204 responses. */
  schema?: ZodType<T>;
  signal?: AbortSignal;
  /** Sent as `Idempotency-Key`; one fresh key per user action (see `newIdempotencyKey`). */
  idempotencyKey?: string;
  /** Extra request headers. */
  headers?: Readonly<Record<string, string>>;
}

/** Origin of the API; '' means the page's own origin (the web export is served by the API server). */
let apiBase = '';
export function setApiBase(base: string): void {
  apiBase = base.replace(/\/$/, '');
}

let csrfToken: string | null = null;
let csrfPending: Promise<string> | null = null;

/** Uses `token` from now on (the server rotates the token on sign-in and sends the new one back). */
export function setCsrfToken(token: string): void {
  csrfToken = token;
  csrfPending = null;
}

/** Forgets the CSRF token (call after sign-out: the session that held it is gone). */
export function resetCsrfToken(): void {
  csrfToken = null;
  csrfPending = null;
}

async function fetchCsrfToken(): Promise<string> {
  if (csrfToken) return csrfToken;
  if (!csrfPending) {
    csrfPending = apiRequest('/auth/csrf', { schema: csrfResponseSchema })
      .then((r) => {
        csrfToken = r.token;
        return r.token;
      })
      .finally(() => {
        csrfPending = null;
      });
  }
  return csrfPending;
}

const NETWORK_MESSAGE = 'Keelson cannot reach its server; check the connection and try again';

function codeForStatus(status: number): ErrorCode {
  if (status === 401) return 'unauthenticated';
  if (status === 403) return 'forbidden';
  if (status === 404) return 'not_found';
  if (status === 409) return 'conflict';
  if (status === 413) return 'payload_too_large';
  if (status === 429) return 'rate_limited';
  if (status >= 500) return 'internal';
  return 'bad_request';
}

async function toApiError(res: Response): Promise<KeelsonApiError> {
  const env = await readErrorEnvelope(res);
  if (env) return new KeelsonApiError(env.code, env.message, env.issues, res.status);
  return new KeelsonApiError(codeForStatus(res.status), `The server answered ${res.status} ${res.statusText || ''}`.trim(), undefined, res.status);
}

async function send(
  path: string,
  method: HttpMethod,
  body: unknown,
  signal?: AbortSignal,
  idempotencyKey?: string,
  extra?: Readonly<Record<string, string>>,
): Promise<Response> {
  const csrfToken = method !== 'GET' ? await fetchCsrfToken() : undefined;
  try {
    return await sendApiRequest(apiBase, path, { method, body, csrfToken, idempotencyKey, headers: extra }, { credentials: 'same-origin', signal });
  } catch (e) {
    if ((e as { name?: string })?.name === 'AbortError') throw e;
    throw new KeelsonApiError('internal', NETWORK_MESSAGE, undefined, 0);
  }
}

/** Calls `/api/v1${path}`; resolves with the parsed body, rejects with a `KeelsonApiError`. */
export async function apiRequest<T = void>(path: string, opts: ApiRequestOptions<T> = {}): Promise<T> {
  const method = opts.method ?? 'GET';
  let res = await send(path, method, opts.body, opts.signal, opts.idempotencyKey, opts.headers);
  if (res.status === 403 && method !== 'GET') {
    const err = await toApiError(res.clone());
    if (err.code === 'csrf_invalid') {
      resetCsrfToken();
      res = await send(path, method, opts.body, opts.signal, opts.idempotencyKey, opts.headers);
    }
  }
  if (!res.ok) throw await toApiError(res);
  if (!opts.schema) return undefined as T;
  let json: unknown;
  try {
    json = await res.json();
  } catch {
    throw new KeelsonApiError('internal', `The server sent a body that is not JSON for ${method} ${path}`, undefined, res.status);
  }
  const parsed = opts.schema.safeParse(json);
  if (!parsed.success) {
    const issues = parsed.error.issues.map((i) => ({ path: i.path.map((p) => (typeof p === 'number' ? p : String(p))), message: i.message }));
    throw new KeelsonApiError('internal', `The server's answer to ${method} ${path} has an unexpected shape`, issues, res.status);
  }
  return parsed.data;
}

/**
 * `POST /api/v1${path}` with a JSON (or FormData) body. For a request that creates something pass
 * `{ idempotencyKey: newIdempotencyKey() }`, made once per user action.
 */
export function post<T = void>(path: string, body: unknown, opts: Omit<ApiRequestOptions<T>, 'method' | 'body'> = {}): Promise<T> {
  return apiRequest<T>(path, { ...opts, method: 'POST', body });
}

/** True when `e` is a KeelsonApiError with one of the given codes. */
export function isApiError(e: unknown, ...codes: ErrorCode[]): e is KeelsonApiError {
  return e instanceof KeelsonApiError && (codes.length === 0 || codes.includes(e.code));
}

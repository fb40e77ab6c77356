/**
 * The one HTTP core of Keelson's two API clients: the web client (api/client.ts, same-origin cookie
 * session) and the command line's remote commands (bin/remote.ts, a stored cookie). Both build
 * requests, send them with `fetch` and read the error envelope here, so the CSRF header, the
 * idempotency key, the JSON/FormData body rule and the envelope parsing are written once.
 * Each client keeps only what differs: where the CSRF token and cookie come from, and how a
 * failure is reported (a `KeelsonApiError` in the app, an exit code on the command line).
 */
import { errorEnvelopeSchema, type ErrorEnvelope } from './errors';

export type HttpMethod = 'GET' | 'POST' | 'PATCH' | 'PUT' | 'DELETE';

/**
 * A fresh key for one user action (one press of a creating button): 128 random bits as 32 hex
 * digits. Uses `crypto.getRandomValues`, which, unlike `crypto.randomUUID`, also exists on pages
 * served over plain http from a LAN address.
 */
export function newIdempotencyKey(): string {
  const bytes = new Uint8Array(16);
  const c = (globalThis as { crypto?: { getRandomValues?: (a: Uint8Array) => Uint8Array } }).crypto;
  if (c?.getRandomValues) c.getRandomValues(bytes);
  else for (let i = 0; i < bytes.length; i++) bytes[i] = Math.floor(Math.random() * 256);
  return Array.from(bytes, (b) => b.toString(16).padStart(2, '0')).join('');
}

export interface CoreRequest {
  method: string;
  /** JSON body (any value) or FormData (uploads); undefined for none. */
  body?: unknown;
  /** Sent as `x-csrf-token` on every request but GET. */
  csrfToken?: string;
  /** Sent as `Idempotency-Key`. */
  idempotencyKey?: string;
  /** Default `application/json`. */
  accept?: string;
  headers?: Readonly<Record<string, string>>;
}

/** Headers and body of an API request: CSRF token on state-changing methods, idempotency key, JSON or FormData body. */
export function buildRequest(r: CoreRequest): { headers: Record<string, string>; body: BodyInit | undefined } {
  const headers: Record<string, string> = { ...r.headers, accept: r.accept ?? 'application/json' };
  if (r.method !== 'GET' && r.csrfToken !== undefined) headers['x-csrf-token'] = r.csrfToken;
  if (r.idempotencyKey) headers['idempotency-key'] = r.idempotencyKey;
  let body: BodyInit | undefined;
  if (r.body instanceof FormData) body = r.body;
  else if (r.body !== undefined) {
    headers['content-type'] = 'application/json';
    body = JSON.stringify(r.body);
  }
  return { headers, body };
}

/** `fetch` of `${base}/api/v1${path}` with the request built by `buildRequest`. Network failures reject as fetch's own. */
export function sendApiRequest(base: string, path: string, r: CoreRequest, init: Omit<RequestInit, 'method' | 'headers' | 'body'> = {}): Promise<Response> {
  const { headers, body } = buildRequest(r);
  return fetch(`${base}/api/v1${path}`, { ...init, method: r.method, headers, body });
}

/** The error envelope of a failed response, or null when the body is not one (not JSON, another shape). */
export async function readErrorEnvelope(res: Response): Promise<ErrorEnvelope['error'] | null> {
  let json: unknown = null;
  try {
    json = await res.json();
  } catch {
    return null;
  }
  const env = errorEnvelopeSchema.safeParse(json);
  return env.success ? env.data.error : null;
}

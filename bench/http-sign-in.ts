/**
 * Signs a demo user in over HTTP against a running Keelson server, as a browser or the CLI would:
 * GET /auth/csrf for a session cookie and token, then POST /auth/login. Shared by the benches that
 * load a real server (api-latency, deep-checks, runs-load).
 */
import { DEMO_PASSWORD } from '../server/seed/users';

export interface HttpSession {
  /** The session cookie (name=value) to send back. */
  cookie: string;
  /** The CSRF token for writes (rotated by sign-in). */
  csrf: string;
}

/** @param base the API's base URL, e.g. http://127.0.0.1:1234/api/v1 */
export async function signInOverHttp(base: string, email = 'researcher@keelson.test'): Promise<HttpSession> {
  const r1 = await fetch(`${base}/auth/csrf`);
  let cookie = (r1.headers.get('set-cookie') ?? '').split(';')[0];
  const token = ((await r1.json()) as { token: string }).token;
  const r2 = await fetch(`${base}/auth/login`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', cookie, 'x-csrf-token': token },
    body: JSON.stringify({ email, password: DEMO_PASSWORD }),
  });
  if (r2.status !== 200) throw new Error(`sign-in as ${email} failed: ${r2.status}`);
  cookie = (r2.headers.get('set-cookie') ?? cookie).split(';')[0];
  return { cookie, csrf: ((await r2.json()) as { csrfToken: string }).csrfToken };
}

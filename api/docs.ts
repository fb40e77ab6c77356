/** Fetcher for the methods page (markdown text from Keelson's own API, same origin). */
import { errorEnvelopeSchema, KeelsonApiError } from '../shared/errors';

export async function getMethodsMarkdown(signal?: AbortSignal): Promise<string> {
  let res: Response;
  try {
    res = await fetch('/api/v1/docs/methods', { headers: { accept: 'text/markdown' }, credentials: 'same-origin', signal });
  } catch (e) {
    if ((e as { name?: string })?.name === 'AbortError') throw e;
    throw new KeelsonApiError('internal', 'Keelson cannot reach its server; check the connection and try again', undefined, 0);
  }
  if (!res.ok) {
    const env = errorEnvelopeSchema.safeParse(await res.json().catch(() => null));
    if (env.success) throw new KeelsonApiError(env.data.error.code, env.data.error.message, env.data.error.issues, res.status);
    throw new KeelsonApiError(res.status === 401 ? 'unauthenticated' : 'internal', `The server answered ${res.status}`, undefined, res.status);
  }
  return res.text();
}

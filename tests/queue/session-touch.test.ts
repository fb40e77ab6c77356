/**
 * Rolling sessions without a write per request: express-session calls the store's touch() on
 * every request of a signed-in user; the row's expiry moves at most once a minute
 * (SESSION_TOUCH_MS), measured with an injected clock and counted as rows written (SQLite's
 * changes()). Through the app: ten GETs in a row write the session row at most once.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SESSION_TOUCH_MS, SqliteSessionStore } from '../../server/services/session-store';
import { agentAs, makeTestApp, type TestApp } from '../api/helpers';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(() => t.close());

const expiryOf = (sid: string) => (t.db.$client.prepare('select expires_at as e from sessions where sid = ?').get(sid) as { e: number }).e;

describe('session touch', () => {
  it('writes the expiry at most once a minute and still extends it after that', async () => {
    let now = 5_000_000;
    const store = new SqliteSessionStore(t.db, 3_600_000, () => now);
    const sess = (at: number) => ({ cookie: { expires: new Date(at + 3_600_000), originalMaxAge: 3_600_000 } }) as never;
    await new Promise<void>((res, rej) => store.set('touch-me', sess(now), (e) => (e ? rej(e) : res())));
    const first = expiryOf('touch-me');
    expect(first).toBe(now + 3_600_000);
    now += SESSION_TOUCH_MS - 1;
    await new Promise<void>((res) => store.touch('touch-me', sess(now), () => res()));
    expect(expiryOf('touch-me')).toBe(first); // within the minute: no write
    now += 2;
    await new Promise<void>((res) => store.touch('touch-me', sess(now), () => res()));
    expect(expiryOf('touch-me')).toBe(now + 3_600_000); // after it: moved
    store.close();
  });

  it('ten signed-in GETs in a row write the session row at most once', async () => {
    const agent = await agentAs(t.app, 'researcher');
    const before = t.db.$client.prepare('select total_changes() as n').get() as { n: number };
    for (let i = 0; i < 10; i++) await agent.get('/api/v1/auth/me').expect(200);
    const after = t.db.$client.prepare('select total_changes() as n').get() as { n: number };
    expect(after.n - before.n).toBeLessThanOrEqual(1);
  });
});

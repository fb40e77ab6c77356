/**
 * Attacks from "what a new team hits in its first hour": sign-in limiter bypass, cookies and CSRF,
 * password policy and change, caching, content types, path ids, idempotency, upload leftovers.
 * Each check failed on the code before its fix.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join } from 'node:path';
import { eq } from 'drizzle-orm';
import { agentAs, anonymousAgent, expectEnvelope, makeTestApp, tableCounts, type Agent, type TestApp } from './helpers';
import { openDb } from '../../server/db/client';
import { createApp } from '../../server/app';
import { loadConfig } from '../../server/config';
import { removeStaleUploadFolders, UPLOAD_FOLDER_PATTERN } from '../../server/boot';
import { UPLOAD_TMP } from '../../server/routes/libraries';
import { seedDemoUsers, DEMO_PASSWORD } from '../../server/seed/users';
import { createMailer } from '../../server/services/mailer';
import { auditLog, idempotencyKeys } from '../../server/db/schema/index';
import { makeFixture, spec, uploadFixture } from './runs-fixture';

const login = (a: Agent, email: string, password: string, ip?: string) => {
  const r = a.post('/api/v1/auth/login').set('x-csrf-token', a.csrf);
  if (ip) r.set('x-forwarded-for', ip);
  return r.send({ email, password });
};

function inviteToken(t: TestApp): string {
  const raw = t.mailer.received.at(-1)?.raw.replace(/=\r?\n/g, '').replace(/=3D/g, '=') ?? '';
  const token = /token=([0-9a-f]{64})/.exec(raw)?.[1];
  if (!token) throw new Error('no invitation token in the last e-mail');
  return token;
}

describe('sign-in rate limit (item 11)', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await makeTestApp({ loginLimit: 3, loginIpLimit: 8 });
  });
  afterAll(() => t.close());

  it('counts " Email@X " variants as the one normalised address, from any IP', async () => {
    const a = await anonymousAgent(t.app);
    for (let i = 0; i < 3; i += 1) expect((await login(a, 'reviewer@keelson.test', `wrong-${i}`, '192.0.2.1')).status).toBe(401);
    const variants = [' reviewer@keelson.test', 'REVIEWER@keelson.test ', ' Reviewer@Keelson.Test ', '\treviewer@keelson.test'];
    for (const v of variants) {
      const r = await login(a, v, 'another-guess', '192.0.2.1');
      expect(r.status, JSON.stringify(v)).toBe(429);
      expect(expectEnvelope(r.body, 'rate_limited').message).toMatch(/this e-mail address/);
    }
    // Another IP does not reset the count of that account (a distributed guesser gets no more tries).
    expect((await login(a, ' Reviewer@keelson.test', 'guess-from-elsewhere', '198.51.100.20')).status).toBe(429);
    // Other accounts are untouched.
    expect((await login(a, 'desk@keelson.test', DEMO_PASSWORD, '192.0.2.1')).status).toBe(200);
  });

  it('limits one IP across many e-mail addresses, and only that IP', async () => {
    const a = await anonymousAgent(t.app);
    const ip = '203.0.113.9';
    for (let i = 0; i < 8; i += 1) expect((await login(a, `nobody${i}@keelson.test`, 'guess', ip)).status).toBe(401);
    const r = await login(a, 'nobody-else@keelson.test', 'guess', ip);
    expect(r.status).toBe(429);
    expect(expectEnvelope(r.body, 'rate_limited').message).toMatch(/from this address/);
    expect((await login(a, 'researcher@keelson.test', DEMO_PASSWORD, ip)).status).toBe(429);
    expect((await login(a, 'nobody-else@keelson.test', 'guess', '203.0.113.10')).status).toBe(401);
  });

  it('does not count successful sign-ins', async () => {
    const a = await anonymousAgent(t.app);
    for (let i = 0; i < 5; i += 1) {
      const r = await login(a, 'admin@keelson.test', DEMO_PASSWORD, '192.0.2.77');
      expect(r.status).toBe(200);
      a.csrf = r.body.csrfToken;
    }
  });

  it('keeps the counts across a restart (they live in SQLite)', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'keelson-limit-'));
    const file = join(dir, 'k.db');
    try {
      let db = openDb(file);
      await seedDemoUsers(db);
      const mailer = await createMailer();
      let app = createApp({ db, mailer, sessionSecret: 'restart-secret-restart', loginLimit: 2 });
      let a = await anonymousAgent(app);
      expect((await login(a, 'desk@keelson.test', 'nope-1')).status).toBe(401);
      expect((await login(a, 'desk@keelson.test', 'nope-2')).status).toBe(401);
      app.close();
      db.$client.close();

      db = openDb(file);
      app = createApp({ db, mailer, sessionSecret: 'restart-secret-restart', loginLimit: 2 });
      a = await anonymousAgent(app);
      const r = await login(a, 'Desk@keelson.test', 'nope-3');
      expect(r.status).toBe(429);
      app.close();
      db.$client.close();
      await mailer.close();
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('cookies, proxy and CSRF (item 12)', () => {
  it('parses COOKIE_SECURE and TRUST_PROXY with zod', () => {
    const env = (e: Record<string, string>) => e as NodeJS.ProcessEnv;
    expect(loadConfig(env({}))).toMatchObject({ COOKIE_SECURE: false, TRUST_PROXY: 'loopback' });
    expect(loadConfig(env({ COOKIE_SECURE: 'true', TRUST_PROXY: '1' }))).toMatchObject({ COOKIE_SECURE: true, TRUST_PROXY: 1 });
    expect(loadConfig(env({ COOKIE_SECURE: 'false', TRUST_PROXY: 'false' }))).toMatchObject({ COOKIE_SECURE: false, TRUST_PROXY: false });
    expect(loadConfig(env({ TRUST_PROXY: '10.0.0.0/8, loopback' })).TRUST_PROXY).toBe('10.0.0.0/8, loopback');
    expect(() => loadConfig(env({ COOKIE_SECURE: 'maybe' }))).toThrow(/COOKIE_SECURE/);
  });

  it('marks the session cookie Secure behind an HTTPS proxy when secure cookies are on', async () => {
    const t = await makeTestApp({ secureCookies: true, trustProxy: 'loopback' });
    try {
      // A cookie jar would not send a Secure cookie over the test's plain HTTP, so carry it by hand.
      const c = await request(t.app).get('/api/v1/auth/csrf').set('x-forwarded-proto', 'https').expect(200);
      const first = (c.headers['set-cookie'] as unknown as string[])[0]!;
      expect(first).toMatch(/;\s*Secure/i);
      const r = await request(t.app)
        .post('/api/v1/auth/login')
        .set('x-forwarded-proto', 'https')
        .set('cookie', first.split(';')[0]!)
        .set('x-csrf-token', c.body.token)
        .send({ email: 'desk@keelson.test', password: DEMO_PASSWORD })
        .expect(200);
      const cookie = (r.headers['set-cookie'] as unknown as string[] | undefined)?.find((s) => s.startsWith('keelson.sid='));
      expect(cookie).toMatch(/;\s*Secure/i);
      expect(cookie).toMatch(/HttpOnly/i);
      // Over plain HTTP (no HTTPS proxy in front) a Secure cookie is never sent at all.
      const http = await request(t.app).get('/api/v1/auth/csrf').expect(200);
      expect(http.headers['set-cookie']).toBeUndefined();
    } finally {
      await t.close();
    }
    const plain = await makeTestApp();
    try {
      const c = await request(plain.app).get('/api/v1/auth/csrf').expect(200);
      const cookie = (c.headers['set-cookie'] as unknown as string[])[0];
      expect(cookie).not.toMatch(/Secure/i);
    } finally {
      await plain.close();
    }
  });

  it('rotates the CSRF token on sign-in and drops it on sign-out', async () => {
    const t = await makeTestApp();
    try {
      const a = await anonymousAgent(t.app);
      const before = a.csrf;
      const r = await login(a, 'researcher@keelson.test', DEMO_PASSWORD).expect(200);
      const after = r.body.csrfToken as string;
      expect(typeof after).toBe('string');
      expect(after).not.toBe(before);
      // The token known before sign-in no longer works…
      const stale = await a.post('/api/v1/specs/check').set('x-csrf-token', before).send({});
      expect(stale.status).toBe(403);
      expectEnvelope(stale.body, 'csrf_invalid');
      // …the new one does (400: the empty body is checked, so CSRF passed).
      expect((await a.post('/api/v1/specs/check').set('x-csrf-token', after).send({})).status).toBe(400);
      expect((await a.get('/api/v1/auth/csrf')).body.token).toBe(after);
      await a.post('/api/v1/auth/logout').set('x-csrf-token', after).expect(204);
      const gone = await a.post('/api/v1/auth/login').set('x-csrf-token', after).send({ email: 'researcher@keelson.test', password: DEMO_PASSWORD });
      expect(gone.status).toBe(403);
      expectEnvelope(gone.body, 'csrf_invalid');
      const fresh = (await a.get('/api/v1/auth/csrf')).body.token as string;
      expect(fresh).not.toBe(after);
    } finally {
      await t.close();
    }
  });

  it('sends Cache-Control: no-store on API answers, errors included (and no ETag: no client revalidates them)', async () => {
    const t = await makeTestApp();
    try {
      const a = await agentAs(t.app, 'desk');
      for (const path of ['/api/v1/health', '/api/v1/auth/me', '/api/v1/specs', '/api/v1/no/such/route', '/api/elsewhere']) {
        const r = await a.get(path);
        expect(r.headers['cache-control'], path).toBe('no-store');
        expect(r.headers.etag, path).toBeUndefined();
      }
      const anon = await request(t.app).get('/api/v1/specs').expect(401);
      expect(anon.headers['cache-control']).toBe('no-store');
      const anonMe = await request(t.app).get('/api/v1/auth/me').expect(200);
      expect(anonMe.body).toEqual({ user: null });
      expect(anonMe.headers['cache-control']).toBe('no-store');
    } finally {
      await t.close();
    }
  });
});

describe('password policy and password change (items 12, 3)', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await makeTestApp({ loginLimit: 3 });
  });
  afterAll(() => t.close());

  async function invite(email: string): Promise<string> {
    const admin = await agentAs(t.app, 'admin');
    await admin.post('/api/v1/admin/invitations').set('x-csrf-token', admin.csrf).send({ email, name: 'Noor Halvard', role: 'researcher' }).expect(201);
    return inviteToken(t);
  }

  it('refuses common and one-character passwords on invitation acceptance, naming the field', async () => {
    const token = await invite('noor.halvard@keelson.test');
    const guest = await anonymousAgent(t.app);
    const before = tableCounts(t.db);
    const cases: [string, RegExp][] = [
      ['password123', /most common passwords/],
      ['qwertyuiop', /most common passwords/],
      ['1234567890', /most common passwords/],
      ['aaaaaaaaaaaa', /one repeated character/],
      ['!!!!!!!!!!!!!!', /one repeated character/],
      ['noor.halvard@keelson.test', /too easy to guess/],
    ];
    for (const [password, msg] of cases) {
      const r = await guest.post('/api/v1/invitations/accept').set('x-csrf-token', guest.csrf).send({ token, password });
      expect(r.status, password).toBe(400);
      const e = expectEnvelope(r.body, 'validation_failed');
      expect(e.message, password).toMatch(msg);
      expect(r.body.error.issues[0].path, password).toEqual(['password']);
    }
    expect(tableCounts(t.db).users).toBe(before.users);
    const ok = await guest.post('/api/v1/invitations/accept').set('x-csrf-token', guest.csrf).send({ token, password: 'lantern-quay-mossy-41' });
    expect(ok.status).toBe(201);
    expect(typeof ok.body.csrfToken).toBe('string');
  });

  it('changes the password: 204, other sessions signed out, audit entry, old password refused', async () => {
    const mine = await agentAs(t.app, 'reviewer');
    const other = await agentAs(t.app, 'reviewer');
    const bystander = await agentAs(t.app, 'desk');
    const r = await mine
      .post('/api/v1/auth/password')
      .set('x-csrf-token', mine.csrf)
      .send({ currentPassword: DEMO_PASSWORD, newPassword: 'tidal-pebble-orchard-5' });
    expect(r.status).toBe(204);
    expect((await mine.get('/api/v1/auth/me')).status).toBe(200);
    expect((await other.get('/api/v1/auth/me').expect(200)).body).toEqual({ user: null }); // signed out: GET /auth/me answers { user: null }
    expect((await bystander.get('/api/v1/auth/me')).status).toBe(200);
    const fresh = await anonymousAgent(t.app);
    expect((await login(fresh, 'reviewer@keelson.test', DEMO_PASSWORD)).status).toBe(401);
    expect((await login(fresh, 'reviewer@keelson.test', 'tidal-pebble-orchard-5')).status).toBe(200);
    const entries = t.db.select().from(auditLog).where(eq(auditLog.action, 'auth.password_change')).all();
    expect(entries).toHaveLength(1);
    expect(JSON.parse(entries[0]!.detail ?? '{}')).toMatchObject({ endedSessions: 1 }); // `other`; `fresh` signed in after the change
  });

  it('answers 400 naming the field for a refused new password, 403 for a wrong current one', async () => {
    const a = await agentAs(t.app, 'researcher');
    const missing = await a.post('/api/v1/auth/password').set('x-csrf-token', a.csrf).send({});
    expect(missing.status).toBe(400);
    expect(missing.body.error.issues.map((i: { path: string[] }) => i.path[0])).toEqual(expect.arrayContaining(['currentPassword', 'newPassword']));
    for (const [newPassword, msg] of [
      ['password1', /at least 10/],
      ['zzzzzzzzzzzz', /one repeated character/],
      ['iloveyou123', /too easy to guess|most common/],
      [DEMO_PASSWORD, /same as the current/],
    ] as const) {
      const r = await a.post('/api/v1/auth/password').set('x-csrf-token', a.csrf).send({ currentPassword: DEMO_PASSWORD, newPassword });
      expect(r.status, newPassword).toBe(400);
      expect(expectEnvelope(r.body, 'validation_failed').message, newPassword).toMatch(msg);
      expect(r.body.error.issues[0].path).toEqual(['newPassword']);
    }
    const wrong = await a.post('/api/v1/auth/password').set('x-csrf-token', a.csrf).send({ currentPassword: 'not-my-password', newPassword: 'granite-heron-window-8' });
    expect(wrong.status).toBe(403);
    expect(expectEnvelope(wrong.body, 'forbidden').message).toMatch(/current password is wrong/);
    expect((await login(await anonymousAgent(t.app), 'researcher@keelson.test', DEMO_PASSWORD)).status).toBe(200);
  });

  it('rate-limits wrong current passwords like sign-in', async () => {
    const a = await agentAs(t.app, 'admin');
    const statuses: number[] = [];
    for (let i = 0; i < 5; i += 1) {
      const r = await a.post('/api/v1/auth/password').set('x-csrf-token', a.csrf).send({ currentPassword: `guess-${i}`, newPassword: 'granite-heron-window-8' });
      statuses.push(r.status);
    }
    expect(statuses).toEqual([403, 403, 403, 429, 429]);
    // Even the right current password waits now.
    const right = await a.post('/api/v1/auth/password').set('x-csrf-token', a.csrf).send({ currentPassword: DEMO_PASSWORD, newPassword: 'granite-heron-window-8' });
    expect(right.status).toBe(429);
  });

  it('declares the route for signed-in users', () => {
    const route = t.app.routeTable.find((r) => r.method === 'post' && r.path === '/auth/password');
    expect(route?.access).toBe('signed-in');
  });
});

describe('content types (item 13)', () => {
  let t: TestApp;
  let a: Agent;
  beforeAll(async () => {
    t = await makeTestApp();
    a = await agentAs(t.app, 'researcher');
  });
  afterAll(() => t.close());

  it('answers 415 "send JSON" to a body that is not JSON', async () => {
    const body = JSON.stringify({ name: 'x' });
    for (const type of ['text/plain', 'application/x-www-form-urlencoded', 'application/xml']) {
      const r = await a.post('/api/v1/specs').set('x-csrf-token', a.csrf).set('content-type', type).send(body);
      expect(r.status, type).toBe(415);
      expect(expectEnvelope(r.body, 'unsupported_media_type').message).toMatch(/send JSON/);
    }
    const put = await a.put('/api/v1/specs/1').set('x-csrf-token', a.csrf).set('content-type', 'text/plain').send('{}');
    expect(put.status).toBe(415);
    const multipart = await a.post('/api/v1/specs').set('x-csrf-token', a.csrf).field('name', 'x');
    expect(multipart.status).toBe(415);
  });

  it('still takes multipart on the upload route and JSON elsewhere, and bodiless POSTs', async () => {
    const up = await a.post('/api/v1/libraries/uploads').set('x-csrf-token', a.csrf).attach('file', Buffer.from('date,A\n2001-01,0.01\n2001-02,0.02\n'), 'a.csv');
    expect(up.status).toBe(201);
    const json = await a.post('/api/v1/specs/check').set('x-csrf-token', a.csrf).send({});
    expect(json.status).toBe(400);
    const upText = await a.post('/api/v1/libraries/uploads').set('x-csrf-token', a.csrf).set('content-type', 'text/csv').send('date,A\n');
    expect(upText.status).toBe(415);
    expect(upText.body.error.message).toMatch(/multipart/);
    await a.post('/api/v1/auth/logout').set('x-csrf-token', a.csrf).expect(204);
  });
});

describe('strict ids in paths (item 13)', () => {
  let t: TestApp;
  let admin: Agent;
  beforeAll(async () => {
    t = await makeTestApp();
    admin = await agentAs(t.app, 'admin');
    // Make id 1 exist for users, libraries, editions, specs and runs, so a lax parser reading "01" or "1e0" as 1 would find it.
    const { editionId } = await uploadFixture(admin, makeFixture(), { name: 'Invented economy', visibility: 'shared' });
    await admin.post('/api/v1/specs').set('x-csrf-token', admin.csrf).send({ name: 'Two factors', editionId, spec: spec() }).expect(201);
    await admin.post('/api/v1/runs').set('x-csrf-token', admin.csrf).send({ specId: 1 }).expect(201);
  });
  afterAll(() => t.close());

  const BAD = ['01', '1e0', '0x1', '1.0', '+1', '%201', '1%20', '-1', '0', '1e3', '0x10', '99999999999999999999'];
  // Upload ids are random text tokens, not integers.
  const TEXT_IDS = /^\/libraries\/uploads\/:id/;

  it('the sane id 1 reaches existing things (so the 404s below are the parser)', async () => {
    for (const p of ['/libraries/1', '/libraries/1/editions/1', '/specs/1', '/runs/1', '/runs/1/review']) {
      expect((await admin.get(`/api/v1${p}`)).status, p).toBe(200);
    }
  });

  it('answers 404 to every non-canonical integer in every :id and :n of every route', async () => {
    const routes = t.app.routeTable.filter((r) => /:(id|n)\b/.test(r.path) && !TEXT_IDS.test(r.path));
    expect(routes.length).toBeGreaterThanOrEqual(20);
    const before = tableCounts(t.db);
    let checked = 0;
    for (const r of routes) {
      const params = [...r.path.matchAll(/:(id|n)\b/g)].map((m) => m[1]!);
      for (const p of params) {
        for (const bad of BAD) {
          const path = r.path.replace(/:(id|n)\b/g, (_m, name: string) => (name === p ? bad : '1'));
          const req = (admin as unknown as Record<string, (u: string) => request.Test>)[r.method]!(`/api/v1${path}`).set('x-csrf-token', admin.csrf);
          const res = r.method === 'get' || r.method === 'delete' ? await req : await req.send({});
          expect(res.status, `${r.method} ${path}`).toBe(404);
          expectEnvelope(res.body, 'not_found');
          checked += 1;
        }
      }
    }
    expect(checked).toBeGreaterThan(200);
    // The run's "finished" e-mail goes out in the background meanwhile; nothing else may change.
    const { outbox: _o1, audit_log: _a1, ...after } = tableCounts(t.db);
    const { outbox: _o0, audit_log: _a0, ...unchanged } = before;
    expect(after).toEqual(unchanged);
  });
});

describe('idempotency keys (item 3)', () => {
  let t: TestApp;
  let a: Agent;
  let editionId: number;
  beforeAll(async () => {
    t = await makeTestApp();
    const admin = await agentAs(t.app, 'admin');
    ({ editionId } = await uploadFixture(admin, makeFixture(), { name: 'Invented economy', visibility: 'shared' }));
    a = await agentAs(t.app, 'researcher');
  });
  afterAll(() => t.close());

  const createSpec = (agent: Agent, key: string | null, name: string, over: Record<string, unknown> = {}) => {
    const r = agent.post('/api/v1/specs').set('x-csrf-token', agent.csrf);
    if (key !== null) r.set('Idempotency-Key', key);
    return r.send({ name, editionId, spec: spec(over) });
  };
  const specCount = () => (t.db.$client.prepare('select count(*) as n from model_specs').get() as { n: number }).n;

  it('replays the first response for the same user, key and body, without running again', async () => {
    const n0 = specCount();
    const first = await createSpec(a, 'spec-create-0001', 'Replayed spec');
    expect(first.status).toBe(201);
    const again = await createSpec(a, 'spec-create-0001', 'Replayed spec');
    expect(again.status).toBe(201);
    expect(again.body).toEqual(first.body);
    expect(again.headers['idempotent-replayed']).toBe('true');
    expect(again.headers['content-type']).toMatch(/application\/json/);
    expect(specCount()).toBe(n0 + 1);
    // Key order in the body does not matter.
    const reordered = await a
      .post('/api/v1/specs')
      .set('x-csrf-token', a.csrf)
      .set('Idempotency-Key', 'spec-create-0001')
      .set('content-type', 'application/json')
      .send(JSON.stringify({ spec: spec(), editionId, name: 'Replayed spec' }));
    expect(reordered.status).toBe(201);
    expect(reordered.body.spec.id).toBe(first.body.spec.id);
    expect(specCount()).toBe(n0 + 1);
  });

  it('answers 422 for the same key with a different body or route', async () => {
    await createSpec(a, 'spec-create-0002', 'First body').expect(201);
    const n = specCount();
    const other = await createSpec(a, 'spec-create-0002', 'Second body');
    expect(other.status).toBe(422);
    expect(expectEnvelope(other.body, 'unprocessable').message).toMatch(/Idempotency-Key was already used for a different request/);
    const otherRoute = await a.post('/api/v1/runs').set('x-csrf-token', a.csrf).set('Idempotency-Key', 'spec-create-0002').send({ editionId, spec: spec() });
    expect(otherRoute.status).toBe(422);
    expect(specCount()).toBe(n);
  });

  it('keeps keys per user, without a key nothing is kept, and a refused first request frees its key', async () => {
    const other = await agentAs(t.app, 'admin');
    const n = specCount();
    expect((await createSpec(other, 'spec-create-0001', 'Admin spec')).status).toBe(201);
    expect(specCount()).toBe(n + 1);
    await createSpec(a, null, 'No key').expect(201);
    await createSpec(a, null, 'No key').expect(201);
    expect(specCount()).toBe(n + 3);
    const bad = await createSpec(a, 'spec-create-0003', 'Bad', { factors: [] });
    expect(bad.status).toBeGreaterThanOrEqual(400);
    expect(t.db.select().from(idempotencyKeys).where(eq(idempotencyKeys.key, 'spec-create-0003')).all()).toEqual([]);
    expect((await createSpec(a, 'spec-create-0003', 'Fixed')).status).toBe(201);
  });

  it('replays a started run, refuses malformed keys and forgets keys after 24 hours', async () => {
    const r1 = await a.post('/api/v1/runs').set('x-csrf-token', a.csrf).set('Idempotency-Key', 'run-7f3a').send({ editionId, spec: spec() });
    expect(r1.status).toBe(201);
    const r2 = await a.post('/api/v1/runs').set('x-csrf-token', a.csrf).set('Idempotency-Key', 'run-7f3a').send({ editionId, spec: spec() });
    expect(r2.body.run.id).toBe(r1.body.run.id);
    const long = await createSpec(a, 'k'.repeat(201), 'Long key');
    expect(long.status).toBe(400);
    t.db.update(idempotencyKeys).set({ createdAt: Date.now() - 25 * 3600 * 1000 }).where(eq(idempotencyKeys.key, 'run-7f3a')).run();
    const r3 = await a.post('/api/v1/runs').set('x-csrf-token', a.csrf).set('Idempotency-Key', 'run-7f3a').send({ editionId, spec: spec() });
    expect(r3.status).toBe(201);
    expect(r3.body.run.id).not.toBe(r1.body.run.id);
  });

  it('answers 409 while the first request with a key is still running, and takes over a lost one', async () => {
    const me = (await a.get('/api/v1/auth/me')).body.user.id as number;
    const body = { name: 'Racing spec', editionId, spec: spec() };
    const first = await createSpec(a, 'race-1', 'Racing spec');
    expect(first.status).toBe(201);
    // Pretend the first request were still running (no response stored yet).
    t.db.update(idempotencyKeys).set({ status: null, body: null }).where(eq(idempotencyKeys.key, 'race-1')).run();
    const busy = await a.post('/api/v1/specs').set('x-csrf-token', a.csrf).set('Idempotency-Key', 'race-1').send(body);
    expect(busy.status).toBe(409);
    expect(expectEnvelope(busy.body, 'conflict').message).toMatch(/still running/);
    // …and lost: its process stopped more than ten minutes ago.
    t.db.update(idempotencyKeys).set({ createdAt: Date.now() - 11 * 60 * 1000 }).where(eq(idempotencyKeys.key, 'race-1')).run();
    const retry = await a.post('/api/v1/specs').set('x-csrf-token', a.csrf).set('Idempotency-Key', 'race-1').send(body);
    expect(retry.status).toBe(201);
    const row = t.db.select().from(idempotencyKeys).where(eq(idempotencyKeys.key, 'race-1')).get();
    expect(row).toMatchObject({ userId: me, status: 201 });
  });

  it('does not replay multipart uploads (documented) and keeps no hash of password bodies', async () => {
    const csv = Buffer.from('date,A\n2001-01,0.01\n2001-02,0.02\n');
    const u1 = await a.post('/api/v1/libraries/uploads').set('x-csrf-token', a.csrf).set('Idempotency-Key', 'upload-1').attach('file', csv, 'a.csv');
    const u2 = await a.post('/api/v1/libraries/uploads').set('x-csrf-token', a.csrf).set('Idempotency-Key', 'upload-1').attach('file', csv, 'a.csv');
    expect(u1.status).toBe(201);
    expect(u2.status).toBe(201);
    expect(u2.body.upload.id).not.toBe(u1.body.upload.id);
    await a.post('/api/v1/auth/password').set('x-csrf-token', a.csrf).set('Idempotency-Key', 'pw-1').send({ currentPassword: 'wrong-one', newPassword: 'granite-heron-window-8' });
    expect(t.db.select().from(idempotencyKeys).where(eq(idempotencyKeys.key, 'pw-1')).all()).toEqual([]);
  });
});

describe('upload temp folders of stopped processes (item 13)', () => {
  it('names the live folder so the boot clean-up can find it', () => {
    expect(UPLOAD_FOLDER_PATTERN.exec(basename(UPLOAD_TMP))?.[1]).toBe(String(process.pid));
  });

  it('removes the folders of dead processes (and a stale one under its own pid), keeps live ones', () => {
    const root = mkdtempSync(join(tmpdir(), 'keelson-tmp-root-'));
    try {
      // A process that dies mid-upload, leaving its folder and a half-written file behind.
      const child = spawnSync(process.execPath, [
        '-e',
        `const fs=require('fs'),p=require('path');const d=p.join(${JSON.stringify(root)},'keelson-uploads-'+process.pid);fs.mkdirSync(d);fs.writeFileSync(p.join(d,'half.csv'),'date,A\\n2001-01');process.kill(process.pid,'SIGKILL');`,
      ]);
      expect(child.signal).toBe('SIGKILL');
      const dead = join(root, `keelson-uploads-${child.pid}`);
      expect(existsSync(join(dead, 'half.csv'))).toBe(true);
      const live = join(root, `keelson-uploads-${process.ppid}`);
      const own = join(root, 'keelson-uploads-4242424');
      const unrelated = join(root, 'keelson-limit-x');
      for (const d of [live, own, unrelated]) {
        mkdirSync(d);
        writeFileSync(join(d, 'f'), 'x');
      }
      const removed = removeStaleUploadFolders(root, 4242424);
      expect(removed.sort()).toEqual([dead, own].sort());
      expect(existsSync(dead)).toBe(false);
      expect(existsSync(own)).toBe(false);
      expect(existsSync(join(live, 'f'))).toBe(true);
      expect(existsSync(join(unrelated, 'f'))).toBe(true);
    } finally {
      rmSync(root, { recursive: true, force: true });
    }
  });
});

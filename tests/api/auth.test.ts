import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { eq } from 'drizzle-orm';
import { agentAs, anonymousAgent, expectEnvelope, makeTestApp, tableCounts, type TestApp } from './helpers';
import { invitations } from '../../server/db/schema/index';
import { SqliteSessionStore } from '../../server/services/session-store';
import { userResponseSchema } from '../../shared/auth';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp({ loginLimit: 5, jsonLimit: 2048 });
});
afterAll(() => t.close());

describe('health and sign-in', () => {
  it('reports health with the version', async () => {
    const r = await request(t.app).get('/api/v1/health').expect(200);
    expect(r.body.status).toBe('ok');
    expect(r.body.version).toMatch(/^\d+\.\d+\.\d+/);
  });

  it('signs in, answers who-am-I, and signs out', async () => {
    const a = await anonymousAgent(t.app);
    const r = await a.post('/api/v1/auth/login').set('x-csrf-token', a.csrf).send({ email: 'Researcher@Keelson.test', password: 'keelson-demo' });
    expect(r.status).toBe(200);
    const { user } = userResponseSchema.parse(r.body);
    expect(user).toMatchObject({ email: 'researcher@keelson.test', role: 'researcher', name: 'Rhea Tolland' });
    expect(r.headers['set-cookie']?.[0]).toMatch(/HttpOnly/i);
    expect(r.headers['set-cookie']?.[0]).toMatch(/SameSite=Lax/i);
    a.csrf = r.body.csrfToken; // rotated on sign-in
    const me = await a.get('/api/v1/auth/me').expect(200);
    expect(me.body.user.id).toBe(user.id);
    await a.post('/api/v1/auth/logout').set('x-csrf-token', a.csrf).expect(204);
    // Signed out is an answer, not an error: 200 { user: null } (no 401 logged by the browser on every signed-out load).
    expect((await a.get('/api/v1/auth/me').expect(200)).body).toEqual({ user: null });
  });

  it('refuses a wrong password and an unknown user alike, writing only the audit line', async () => {
    const a = await anonymousAgent(t.app);
    const before = tableCounts(t.db);
    const r1 = await a.post('/api/v1/auth/login').set('x-csrf-token', a.csrf).send({ email: 'desk@keelson.test', password: 'nope-nope' });
    const r2 = await a.post('/api/v1/auth/login').set('x-csrf-token', a.csrf).send({ email: 'ghost@keelson.test', password: 'nope-nope' });
    expect(r1.status).toBe(401);
    expect(r2.status).toBe(401);
    expect(expectEnvelope(r1.body, 'unauthenticated').message).toBe(expectEnvelope(r2.body).message);
    const after = tableCounts(t.db);
    expect(after.users).toBe(before.users);
    expect(after.audit_log).toBe(before.audit_log + 2);
  });

  it('refuses a state-changing request without the CSRF token', async () => {
    const a = await anonymousAgent(t.app);
    const r = await a.post('/api/v1/auth/login').send({ email: 'desk@keelson.test', password: 'keelson-demo' });
    expect(r.status).toBe(403);
    expect(expectEnvelope(r.body, 'csrf_invalid').message).toMatch(/x-csrf-token/);
  });

  it('answers malformed JSON with 400 and an oversized body with 413', async () => {
    const a = await anonymousAgent(t.app);
    const bad = await a.post('/api/v1/auth/login').set('x-csrf-token', a.csrf).set('content-type', 'application/json').send('{"email": ');
    expect(bad.status).toBe(400);
    expect(expectEnvelope(bad.body, 'bad_request').message).toMatch(/JSON/);
    const big = await a.post('/api/v1/auth/login').set('x-csrf-token', a.csrf).send({ email: 'a@b.c', password: 'x'.repeat(5000) });
    expect(big.status).toBe(413);
    expectEnvelope(big.body, 'payload_too_large');
  });

  it('validates the sign-in body with field issues', async () => {
    const a = await anonymousAgent(t.app);
    const r = await a.post('/api/v1/auth/login').set('x-csrf-token', a.csrf).send({ email: 'not-an-email' });
    expect(r.status).toBe(400);
    const e = r.body.error;
    expect(e.code).toBe('validation_failed');
    expect(e.issues.map((i: { path: string[] }) => i.path[0])).toEqual(expect.arrayContaining(['email', 'password']));
  });

  it('rate-limits repeated sign-in attempts for one e-mail with 429', async () => {
    const a = await anonymousAgent(t.app);
    const statuses: number[] = [];
    for (let i = 0; i < 7; i += 1) {
      const r = await a.post('/api/v1/auth/login').set('x-csrf-token', a.csrf).send({ email: 'someone.else@keelson.test', password: `wrong-${i}` });
      statuses.push(r.status);
    }
    expect(statuses.slice(0, 5)).toEqual([401, 401, 401, 401, 401]);
    expect(statuses.slice(5)).toEqual([429, 429]);
    // still up
    await request(t.app).get('/api/v1/health').expect(200);
  });

  it('answers an unknown API path with a JSON 404', async () => {
    const r = await request(t.app).get('/api/v1/no/such/thing').expect(404);
    expectEnvelope(r.body, 'not_found');
  });

  it('sets security headers (helmet)', async () => {
    const r = await request(t.app).get('/api/v1/health');
    expect(r.headers['content-security-policy']).toContain("default-src 'self'");
    expect(r.headers['x-content-type-options']).toBe('nosniff');
    expect(r.headers['x-powered-by']).toBeUndefined();
  });
});

describe('invitations and team administration', () => {
  it('invites by e-mail; the invitee accepts once and is signed in with the role', async () => {
    const admin = await agentAs(t.app, 'admin');
    const r = await admin
      .post('/api/v1/admin/invitations')
      .set('x-csrf-token', admin.csrf)
      .send({ email: 'mila.ferrand@keelson.test', name: 'Mila Ferrand', role: 'reviewer' })
      .expect(201);
    expect(r.body.invitation.acceptedAt).toBeNull();
    const mail = t.mailer.received.at(-1);
    expect(mail?.to).toEqual(['mila.ferrand@keelson.test']);
    const token = /token=([0-9a-f]{64})/.exec(mail?.raw.replace(/=\r?\n/g, '').replace(/=3D/g, '=') ?? '')?.[1];
    expect(token).toBeDefined();
    const outbox = await admin.get('/api/v1/admin/outbox').expect(200);
    expect(outbox.body.messages[0].to).toBe('mila.ferrand@keelson.test');
    expect(outbox.body.messages[0].text).toContain(`token=${token}`);

    const guest = await anonymousAgent(t.app);
    const preview = await guest.get(`/api/v1/invitations/${token}`).expect(200);
    expect(preview.body.invitation).toMatchObject({ email: 'mila.ferrand@keelson.test', role: 'reviewer' });
    const short = await guest.post('/api/v1/invitations/accept').set('x-csrf-token', guest.csrf).send({ token, password: 'short' });
    expect(short.status).toBe(400);
    const ok = await guest.post('/api/v1/invitations/accept').set('x-csrf-token', guest.csrf).send({ token, password: 'a-long-enough-pass' });
    expect(ok.status).toBe(201);
    expect((await guest.get('/api/v1/auth/me').expect(200)).body.user.role).toBe('reviewer');

    const again = await anonymousAgent(t.app);
    const before = tableCounts(t.db);
    const reuse = await again.post('/api/v1/invitations/accept').set('x-csrf-token', again.csrf).send({ token, password: 'a-long-enough-pass' });
    expect(reuse.status).toBe(409);
    expect(expectEnvelope(reuse.body, 'conflict').message).toMatch(/already used/);
    expect(tableCounts(t.db)).toEqual(before);
  });

  it('refuses an expired invitation with 409 and an unknown one with 404', async () => {
    const admin = await agentAs(t.app, 'admin');
    await admin
      .post('/api/v1/admin/invitations')
      .set('x-csrf-token', admin.csrf)
      .send({ email: 'late.comer@keelson.test', name: 'Late Comer', role: 'desk' })
      .expect(201);
    const token = /token=([0-9a-f]{64})/.exec(t.mailer.received.at(-1)?.raw.replace(/=\r?\n/g, '').replace(/=3D/g, '=') ?? '')?.[1];
    t.db.update(invitations).set({ expiresAt: '2000-01-01T00:00:00.000Z' }).where(eq(invitations.email, 'late.comer@keelson.test')).run();
    const guest = await anonymousAgent(t.app);
    const r = await guest.post('/api/v1/invitations/accept').set('x-csrf-token', guest.csrf).send({ token, password: 'a-long-enough-pass' });
    expect(r.status).toBe(409);
    expect(expectEnvelope(r.body, 'conflict').message).toMatch(/expired/);
    const u = await guest.get(`/api/v1/invitations/${'0'.repeat(64)}`);
    expect(u.status).toBe(404);
  });

  it('refuses to invite an existing account', async () => {
    const admin = await agentAs(t.app, 'admin');
    const r = await admin.post('/api/v1/admin/invitations').set('x-csrf-token', admin.csrf).send({ email: 'desk@keelson.test', name: 'Dup', role: 'desk' });
    expect(r.status).toBe(409);
  });

  it('changes a role, deactivates (which ends the session) and keeps the last admin', async () => {
    const admin = await agentAs(t.app, 'admin');
    const desk = await agentAs(t.app, 'desk');
    const users = (await admin.get('/api/v1/admin/users').expect(200)).body.users as { id: number; email: string }[];
    const deskId = users.find((u) => u.email === 'desk@keelson.test')!.id;
    const adminId = users.find((u) => u.email === 'admin@keelson.test')!.id;
    const r = await admin.patch(`/api/v1/admin/users/${deskId}`).set('x-csrf-token', admin.csrf).send({ active: false }).expect(200);
    expect(r.body.user.active).toBe(false);
    expect((await desk.get('/api/v1/auth/me').expect(200)).body).toEqual({ user: null });
    const relogin = await anonymousAgent(t.app);
    expect((await relogin.post('/api/v1/auth/login').set('x-csrf-token', relogin.csrf).send({ email: 'desk@keelson.test', password: 'keelson-demo' })).status).toBe(401);
    await admin.patch(`/api/v1/admin/users/${deskId}`).set('x-csrf-token', admin.csrf).send({ active: true, role: 'desk' }).expect(200);

    const last = await admin.patch(`/api/v1/admin/users/${adminId}`).set('x-csrf-token', admin.csrf).send({ role: 'desk' });
    expect(last.status).toBe(409);
    expect(expectEnvelope(last.body, 'conflict').message).toMatch(/at least one active admin/);
    const missing = await admin.patch('/api/v1/admin/users/424242').set('x-csrf-token', admin.csrf).send({ role: 'desk' });
    expect(missing.status).toBe(404);
    const audit = (await admin.get('/api/v1/admin/audit').expect(200)).body.entries as { action: string }[];
    expect(audit.map((e) => e.action)).toEqual(expect.arrayContaining(['auth.login', 'user.update', 'invitation.create']));
  });

  it('lets any signed-in user read the e-mails sent to them', async () => {
    const reviewer = await agentAs(t.app, 'reviewer');
    const r = await reviewer.get('/api/v1/auth/outbox').expect(200);
    for (const m of r.body.messages as { to: string }[]) expect(m.to).toBe('reviewer@keelson.test');
  });
});

describe('session store', () => {
  it('forgets expired sessions on read and sweeps them', async () => {
    let now = 1_000_000;
    const store = new SqliteSessionStore(t.db, 1000, () => now);
    const sess = { cookie: { expires: new Date(now + 500), originalMaxAge: 500 } } as never;
    await new Promise<void>((res, rej) => store.set('abc', sess, (e) => (e ? rej(e) : res())));
    const live = await new Promise((res) => store.get('abc', (_e, s) => res(s)));
    expect(live).not.toBeNull();
    now += 600;
    const gone = await new Promise((res) => store.get('abc', (_e, s) => res(s)));
    expect(gone).toBeNull();
    expect(store.sweep()).toBeGreaterThanOrEqual(1);
    store.close();
  });
});

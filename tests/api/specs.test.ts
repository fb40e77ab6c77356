/** Model specs API: save, read, list, edit (author or admin), copy, check; validation and roles. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, anonymousAgent, expectEnvelope, makeTestApp, tableCounts, type Agent, type TestApp } from './helpers';
import { FIX_ASSETS, makeFixture, spec, uploadFixture, type Fixture } from './runs-fixture';
import { createUser } from '../../server/services/users';
import { DEMO_PASSWORD } from '../../server/seed/users';
import { mailSettled } from '../../server/services/runs';
import { specResponseSchema, specsResponseSchema, modelSpecSchema, checkSpecAgainstEdition } from '../../shared/specs';

let t: TestApp;
let fx: Fixture;
let admin: Agent;
let researcher: Agent;
let other: Agent;
let reviewer: Agent;
let desk: Agent;
let shared: { libraryId: number; editionId: number };
let priv: { libraryId: number; editionId: number };

beforeAll(async () => {
  t = await makeTestApp();
  fx = makeFixture();
  admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  reviewer = await agentAs(t.app, 'reviewer');
  desk = await agentAs(t.app, 'desk');
  await createUser(t.db, { email: 'second.researcher@keelson.test', name: 'Second Researcher', role: 'researcher', password: DEMO_PASSWORD });
  other = await anonymousAgent(t.app);
  other.csrf = (await other.post('/api/v1/auth/login').set('x-csrf-token', other.csrf).send({ email: 'second.researcher@keelson.test', password: DEMO_PASSWORD }).expect(200)).body.csrfToken;
  shared = await uploadFixture(admin, fx, { name: 'Invented economy', visibility: 'shared' });
  priv = await uploadFixture(researcher, fx, { name: 'Private economy', visibility: 'private' });
});
afterAll(async () => {
  await mailSettled();
  await t.close();
});

const send = (a: Agent, method: 'post' | 'put', url: string, body: unknown) => a[method](`/api/v1${url}`).set('x-csrf-token', a.csrf).send(body as object);

describe('spec schema (shared by form and server)', () => {
  it('fills the defaults and refuses impossible choices with a message per field', () => {
    const s = modelSpecSchema.parse({ assets: ['A'], factors: ['F'] });
    expect(s).toMatchObject({ nonTraded: [], stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, level: 0.05 });
    const bad = modelSpecSchema.safeParse({ assets: ['A', 'F', 'A'], factors: ['F'], dropSet: ['G'], rf: 'A', window: { start: '2010-02', end: '2010-01' } });
    expect(bad.success).toBe(false);
    const msgs = bad.error!.issues.map((i) => i.message).join(' | ');
    expect(msgs).toMatch(/'A' is chosen twice/);
    expect(msgs).toMatch(/'F' is chosen both as a factor and as a test asset/);
    expect(msgs).toMatch(/drop set names 'G'/);
    expect(msgs).toMatch(/risk-free series 'A'/);
    expect(msgs).toMatch(/ends before it starts/);
  });

  it('counts N, K, T and df = N − K against an edition, and refuses T ≤ N + K', () => {
    const ed = { dates: ['2001-01', '2001-02', '2001-03', '2001-04', '2001-05'], series: [{ name: 'A', kind: 'asset' as const }, { name: 'B', kind: 'asset' as const }, { name: 'F', kind: 'factor' as const }] };
    // lag 0: with T = 4 the automatic lag (1) is not below T/4 and is refused (see the lag tests)
    const ok = checkSpecAgainstEdition({ assets: ['A', 'B'], factors: ['F'], window: { start: '2001-02' }, lags: 0 }, ed);
    expect(ok).toMatchObject({ T: 4, N: 2, K: 1, df: 1, start: '2001-02', end: '2001-05', issues: [] });
    const tight = checkSpecAgainstEdition({ assets: ['A', 'B'], factors: ['F'], window: { start: '2001-03' }, lags: 0 }, ed);
    expect(tight.issues[0].message).toMatch(/T = 3 periods is too few/);
    const auto = checkSpecAgainstEdition({ assets: ['A', 'B'], factors: ['F'], window: { start: '2001-02' } }, ed);
    expect(auto.issues.map((i) => i.message)).toEqual(['The automatic HAC lag (1) is too long for T = 4 periods: the lag must be below T/4 = 1; set a lag of at most 0']);
  });
});

describe('specs API', () => {
  let id: number;

  it('saves a named spec (researcher) and reads it back with defaults filled', async () => {
    const r = await send(researcher, 'post', '/specs', { name: 'Market and echo', editionId: shared.editionId, spec: { assets: FIX_ASSETS, factors: ['MKT', 'ECHO'], rf: 'RF' } });
    expect(r.status).toBe(201);
    const s = specResponseSchema.parse(r.body).spec;
    id = s.id;
    expect(s).toMatchObject({ name: 'Market and echo', libraryName: 'Invented economy', editionNumber: 1, copiedFromId: null });
    expect(s.spec.stage).toBe('second');
    for (const a of [admin, researcher, reviewer, desk]) {
      const g = await a.get(`/api/v1/specs/${id}`).expect(200);
      expect(g.body.spec.spec).toEqual(s.spec);
    }
  });

  it('lists specs (all, mine, by edition) and hides specs on private libraries from others', async () => {
    const p = await send(researcher, 'post', '/specs', { name: 'Private one', editionId: priv.editionId, spec: spec() });
    expect(p.status).toBe(201);
    const mine = specsResponseSchema.parse((await researcher.get('/api/v1/specs?mine=true').expect(200)).body).specs;
    expect(mine.map((s) => s.name)).toEqual(expect.arrayContaining(['Market and echo', 'Private one']));
    const deskList = specsResponseSchema.parse((await desk.get('/api/v1/specs').expect(200)).body).specs;
    expect(deskList.some((s) => s.name === 'Private one')).toBe(false);
    expect(deskList.some((s) => s.name === 'Market and echo')).toBe(true);
    expectEnvelope((await desk.get(`/api/v1/specs/${p.body.spec.id}`).expect(404)).body, 'not_found');
    const byEd = specsResponseSchema.parse((await admin.get(`/api/v1/specs?editionId=${priv.editionId}`).expect(200)).body).specs;
    expect(byEd.every((s) => s.editionId === priv.editionId)).toBe(true);
    expect(byEd.length).toBe(1);
  });

  it('lets the author edit; another researcher, reviewer and desk cannot; admin can', async () => {
    const up = await send(researcher, 'put', `/specs/${id}`, { name: 'Market, echo (edited)', spec: spec({ rf: 'RF', stage: 'iterated' }) });
    expect(up.status).toBe(200);
    expect(up.body.spec.spec.stage).toBe('iterated');
    const before = tableCounts(t.db);
    const o = await send(other, 'put', `/specs/${id}`, { name: 'Hijack' });
    expect(o.status).toBe(403);
    expect(expectEnvelope(o.body, 'forbidden').message).toMatch(/copy it/);
    for (const a of [reviewer, desk]) expectEnvelope((await send(a, 'put', `/specs/${id}`, { name: 'x' }).expect(403)).body, 'forbidden');
    expect(tableCounts(t.db)).toEqual(before);
    expect((await send(admin, 'put', `/specs/${id}`, { name: 'Admin renamed' })).status).toBe(200);
  });

  it('copies a spec into a new one owned by the copier', async () => {
    const c = await send(other, 'post', `/specs/${id}/copy`, {});
    expect(c.status).toBe(201);
    expect(c.body.spec.name).toBe('Copy of Admin renamed');
    expect(c.body.spec.copiedFromId).toBe(id);
    expect(c.body.spec.authorName).toBe('Second Researcher');
    const named = await send(other, 'post', `/specs/${id}/copy`, { name: 'My variant' });
    expect(named.body.spec.name).toBe('My variant');
    expect((await send(other, 'put', `/specs/${c.body.spec.id}`, { name: 'Mine now' })).status).toBe(200);
    expectEnvelope((await send(desk, 'post', `/specs/${id}/copy`, {}).expect(403)).body, 'forbidden');
  });

  it('refuses impossible specs (400 shape, 422 misfit) and writes nothing', async () => {
    const before = tableCounts(t.db);
    const cases: [unknown, number, RegExp][] = [
      [{ name: '', editionId: shared.editionId, spec: spec() }, 400, /name/],
      [{ name: 'x', editionId: shared.editionId, spec: spec({ factors: [] }) }, 400, /at least one factor/],
      [{ name: 'x', editionId: shared.editionId, spec: spec({ factors: ['A03'] }) }, 400, /both as a factor and as a test asset/],
      [{ name: 'x', editionId: shared.editionId, spec: spec({ window: { end: fx.dates[5] } }) }, 422, /too few/],
      [{ name: 'x', editionId: shared.editionId, spec: spec({ assets: ['A01', 'ZZZ'] }) }, 422, /no series 'ZZZ'/],
      [{ name: 'x', editionId: 999999, spec: spec() }, 404, /edition/],
    ];
    for (const [body, status, msg] of cases) {
      const r = await send(researcher, 'post', '/specs', body);
      expect(r.status, JSON.stringify(r.body)).toBe(status);
      expect(expectEnvelope(r.body).message).toMatch(msg);
    }
    expectEnvelope((await send(researcher, 'put', `/specs/${id}`, { spec: spec({ factors: ['NOPE'] }) }).expect(422)).body, 'unprocessable');
    expectEnvelope((await send(researcher, 'put', `/specs/${id}`, {}).expect(400)).body, 'validation_failed');
    expect(tableCounts(t.db)).toEqual(before);
  });

  it('checks a spec against an edition without saving: T, N, K, df and issues', async () => {
    const before = tableCounts(t.db);
    const r = await send(desk, 'post', '/specs/check', { editionId: shared.editionId, spec: spec({ window: { start: fx.dates[0], end: fx.dates[59] } }) });
    expect(r.status).toBe(200);
    expect(r.body.check).toMatchObject({ T: 60, N: 10, K: 2, df: 8, issues: [] });
    const bad = await send(desk, 'post', '/specs/check', { editionId: shared.editionId, spec: spec({ window: { start: fx.dates[0], end: fx.dates[9] } }) });
    expect(bad.body.check.issues[0].message).toMatch(/too few/);
    expect(tableCounts(t.db)).toEqual(before);
  });

  it('archives and restores (author or admin): hidden from the list unless ?archived=true, runs stay readable', async () => {
    const s = await send(researcher, 'post', '/specs', { name: 'To archive', editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
    const sid = s.body.spec.id as number;
    expect(s.body.spec.archivedAt).toBeNull();
    const run = await send(researcher, 'post', '/runs', { specId: sid });
    expect(run.status).toBe(201);
    const runId = run.body.run.id as number;

    // roles: another researcher, reviewer and desk may not archive (403), nothing changes
    await mailSettled();
    const before = tableCounts(t.db);
    expect(expectEnvelope((await send(other, 'post', `/specs/${sid}/archive`, {}).expect(403)).body, 'forbidden').message).toMatch(/author of a spec \(or an admin\) may archive it/);
    for (const a of [reviewer, desk]) expectEnvelope((await send(a, 'post', `/specs/${sid}/archive`, {}).expect(403)).body, 'forbidden');
    expectEnvelope((await send(researcher, 'post', '/specs/999999/archive', {}).expect(404)).body, 'not_found');
    expectEnvelope((await send(researcher, 'post', '/specs/abc/archive', {}).expect(404)).body, 'not_found');
    expect(tableCounts(t.db)).toEqual(before);

    const a = await send(researcher, 'post', `/specs/${sid}/archive`, {});
    expect(a.status).toBe(200);
    const archived = specResponseSchema.parse(a.body).spec;
    expect(archived.archivedAt).toEqual(expect.any(String));
    // archiving again changes nothing
    expect((await send(researcher, 'post', `/specs/${sid}/archive`, {}).expect(200)).body.spec.archivedAt).toBe(archived.archivedAt);

    const listed = (q: string, a2: Agent = desk) => a2.get(`/api/v1/specs${q}`).expect(200).then((r) => specsResponseSchema.parse(r.body).specs.map((x) => x.id));
    expect(await listed('')).not.toContain(sid);
    expect(await listed('?mine=true', researcher)).not.toContain(sid);
    expect(await listed('?archived=true')).toContain(sid);
    expect(await listed('?archived=true')).toContain(id); // live specs are listed too
    expectEnvelope((await desk.get('/api/v1/specs?archived=maybe').expect(400)).body, 'validation_failed');
    // still readable, and so are its runs
    expect((await desk.get(`/api/v1/specs/${sid}`).expect(200)).body.spec.archivedAt).toBe(archived.archivedAt);
    expect((await desk.get(`/api/v1/runs/${runId}`).expect(200)).body.run.specId).toBe(sid);
    expect((await desk.get(`/api/v1/runs?specId=${sid}`).expect(200)).body.runs.map((x: { id: number }) => x.id)).toContain(runId);
    // an archived spec is not edited or started until restored (409); it can be copied
    await mailSettled();
    const mid = tableCounts(t.db);
    expect(expectEnvelope((await send(researcher, 'put', `/specs/${sid}`, { name: 'Renamed' }).expect(409)).body, 'conflict').message).toMatch(/archived; restore it/);
    expect(expectEnvelope((await send(researcher, 'post', '/runs', { specId: sid }).expect(409)).body, 'conflict').message).toMatch(/archived; restore it/);
    expect(tableCounts(t.db)).toEqual(mid);
    const copy = await send(other, 'post', `/specs/${sid}/copy`, {});
    expect(copy.status).toBe(201);
    expect(copy.body.spec.archivedAt).toBeNull();

    // an admin may restore anyone's spec
    const r = await send(admin, 'post', `/specs/${sid}/restore`, {});
    expect(r.status).toBe(200);
    expect(r.body.spec.archivedAt).toBeNull();
    expect(await listed('')).toContain(sid);
    expect((await send(researcher, 'post', '/runs', { specId: sid })).status).toBe(201);
    // audit trail
    const actions = (t.db.$client.prepare("select action from audit_log where action like 'spec.%' and detail like ?").all(`%"specId":${sid}%`) as { action: string }[]).map((x) => x.action);
    expect(actions).toEqual(expect.arrayContaining(['spec.create', 'spec.archive', 'spec.restore']));
  });

  it('refuses spec writes to reviewer and desk, reads to signed-out callers', async () => {
    for (const a of [reviewer, desk]) expectEnvelope((await send(a, 'post', '/specs', { name: 'x', editionId: shared.editionId, spec: spec() }).expect(403)).body, 'forbidden');
    const anon = await anonymousAgent(t.app);
    expectEnvelope((await anon.get('/api/v1/specs').expect(401)).body, 'unauthenticated');
  });
});

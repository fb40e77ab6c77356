/**
 * The runs and jobs lists page and filter in SQL (issue 13 item 6). Checks against something
 * outside the list code:
 * - access: per role, the list holds exactly the runs whose GET /runs/:id answers 200 (the per-run
 *   check, findRunRow → canReadEdition) and no other: the SQL rule equals the row-by-row rule;
 * - paging: walking the pages with `before = nextCursor` gives every run once, newest first, and
 *   `total` equals that count;
 * - sign-off and N, K, T filters: each filtered list equals the unfiltered list filtered in the test
 *   on the summary's own fields (the state signoffStates() computes, the result's N, K, T);
 * - N, K, T as served equal the stored result's (GET /runs/:id).
 * Data: the seeded invented economy of runs-fixture.ts, a shared and a private library.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, anonymousAgent, makeTestApp, type Agent, type TestApp, post } from './helpers';
import { makeFixture, spec, uploadFixture } from './runs-fixture';
import { mailSettled } from '../../server/services/runs';
import { runResponseSchema, runsResponseSchema, type RunSummary } from '../../shared/runs';
import { jobResponseSchema, jobsResponseSchema } from '../../shared/jobs';

let t: TestApp;
let admin: Agent;
let researcher: Agent;
let reviewer: Agent;
let desk: Agent;
let reviewerId: number;
const created: number[] = [];
let privateRuns: number[] = [];

async function startRun(agent: Agent, body: unknown): Promise<number> {
  const r = await post(agent, '/runs', body);
  if (r.status !== 201) throw new Error(`run not started: ${r.status} ${JSON.stringify(r.body)}`);
  return runResponseSchema.parse(r.body).run.id;
}
async function page(agent: Agent, query: string) {
  return runsResponseSchema.parse((await agent.get(`/api/v1/runs${query}`).expect(200)).body);
}
/** Every run of the list, walking its pages of `limit`. */
async function walk(agent: Agent, query: Record<string, string | number>, limit: number): Promise<{ ids: number[]; totals: number[]; pages: number }> {
  const ids: number[] = [];
  const totals: number[] = [];
  let before: number | null = null;
  let pages = 0;
  do {
    const qs = new URLSearchParams({ ...Object.fromEntries(Object.entries(query).map(([k, v]) => [k, String(v)])), limit: String(limit), ...(before ? { before: String(before) } : {}) });
    const p = await page(agent, `?${qs.toString()}`);
    expect(p.runs.length).toBeLessThanOrEqual(limit);
    ids.push(...p.runs.map((r) => r.id));
    totals.push(p.total);
    before = p.nextCursor;
    pages += 1;
  } while (before !== null && pages < 100);
  return { ids, totals, pages };
}

beforeAll(async () => {
  t = await makeTestApp();
  const fx = makeFixture();
  admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  reviewer = await agentAs(t.app, 'reviewer');
  desk = await agentAs(t.app, 'desk');
  reviewerId = (await reviewer.get('/api/v1/auth/me')).body.user.id as number;
  const shared = await uploadFixture(admin, fx, { name: 'Invented economy', visibility: 'shared' });
  const priv = await uploadFixture(researcher, fx, { name: 'My private economy', visibility: 'private' });
  // shared: 5 runs of two shapes (K = 1 and K = 2); private: 2 runs
  for (const factors of [['MKT'], ['MKT', 'ECHO'], ['MKT'], ['MKT', 'ECHO'], ['MKT']]) created.push(await startRun(researcher, { editionId: shared.editionId, spec: spec({ factors }) }));
  privateRuns = [await startRun(researcher, { editionId: priv.editionId, spec: spec() }), await startRun(researcher, { editionId: priv.editionId, spec: spec({ factors: ['MKT'] }) })];
  // sign-off states: one requested, one approved, one with changes requested
  await post(researcher, `/runs/${created[0]}/signoff-requests`, { reviewerId }).expect(201);
  await post(researcher, `/runs/${created[1]}/signoff-requests`, { reviewerId }).expect(201);
  await post(reviewer, `/runs/${created[1]}/signoff`, { decision: 'approved' }).expect(201);
  await post(reviewer, `/runs/${created[2]}/signoff`, { decision: 'changes-requested', note: 'Longer window?' }).expect(201);
}, 120_000);
afterAll(async () => {
  await mailSettled();
  await t.close();
});

describe('GET /runs: access in SQL equals the per-run check', () => {
  it('each role lists exactly the runs it may open (private runs: owner and admin only)', async () => {
    const all = [...created, ...privateRuns];
    for (const [name, agent] of [['admin', admin], ['researcher', researcher], ['reviewer', reviewer], ['desk', desk]] as const) {
      const listed = (await page(agent, '?limit=500')).runs.map((r) => r.id).sort((a, b) => a - b);
      const readable: number[] = [];
      for (const id of all) if ((await agent.get(`/api/v1/runs/${id}`)).status === 200) readable.push(id);
      expect(listed, name).toEqual(readable.sort((a, b) => a - b));
      const expectPrivate = name === 'admin' || name === 'researcher';
      expect(privateRuns.every((id) => listed.includes(id)), name).toBe(expectPrivate);
    }
  });

  it('signed out: 401 with the envelope (deny by default)', async () => {
    const anon = await anonymousAgent(t.app);
    for (const url of ['/api/v1/runs', '/api/v1/jobs']) {
      const r = await anon.get(url);
      expect(r.status, url).toBe(401);
      expect(r.body.error.code).toBe('unauthenticated');
    }
  });
});

describe('GET /runs: pages', () => {
  it('walking the pages with nextCursor gives every run once, newest first, and total counts them', async () => {
    const whole = (await page(admin, '?limit=500')).runs.map((r) => r.id);
    expect(whole.length).toBe(created.length + privateRuns.length);
    for (const limit of [1, 2, 3]) {
      const w = await walk(admin, {}, limit);
      expect(w.ids).toEqual(whole);
      expect(new Set(w.totals)).toEqual(new Set([whole.length]));
      expect(w.pages).toBe(Math.ceil(whole.length / limit));
    }
    // the desk's total does not count the private runs it cannot read
    expect((await page(desk, '?limit=1')).total).toBe(created.length);
  });

  it('refuses a bad cursor or page size with 400 and the envelope', async () => {
    for (const q of ['?before=0', '?before=x', '?limit=0', '?limit=501']) {
      const r = await desk.get(`/api/v1/runs${q}`);
      expect(r.status, q).toBe(400);
      expect(r.body.error.code).toBe('validation_failed');
    }
  });
});

describe('GET /runs: filters in SQL equal the summary fields', () => {
  const everything = async () => (await page(admin, '?limit=500')).runs;

  it('sign-off state', async () => {
    const all = await everything();
    for (const state of ['none', 'requested', 'approved', 'changes-requested'] as const) {
      const got = (await page(admin, `?signoff=${state}&limit=500`)).runs.map((r) => r.id);
      expect(got, state).toEqual(all.filter((r) => r.signoff === state).map((r) => r.id));
    }
    expect((await page(admin, '?signoff=requested')).runs.map((r) => r.id)).toEqual([created[0]]);
    expect((await page(admin, '?signoff=approved')).runs.map((r) => r.id)).toEqual([created[1]]);
  });

  it('N, K and T; the served N, K, T equal the stored result’s', async () => {
    const all = await everything();
    const finished = all.filter((r) => r.status === 'finished');
    expect(finished.length).toBeGreaterThan(3);
    for (const r of finished) {
      const full = runResponseSchema.parse((await admin.get(`/api/v1/runs/${r.id}`).expect(200)).body).run;
      expect([r.N, r.K, r.T]).toEqual([full.result!.N, full.result!.K, full.result!.T]);
    }
    for (const key of ['N', 'K', 'T'] as const) {
      const values = [...new Set(finished.map((r) => r[key]))];
      for (const v of values) {
        const got = (await page(admin, `?${key}=${v}&limit=500`)).runs.map((r) => r.id);
        expect(got, `${key}=${v}`).toEqual(all.filter((r: RunSummary) => r[key] === v).map((r) => r.id));
      }
    }
    expect((await page(admin, '?K=2&limit=500')).runs.length).toBeGreaterThan(0);
    expect((await page(admin, '?K=1&limit=500')).runs.length).toBeGreaterThan(0);
  });
});

describe('GET /jobs: access and pages in SQL', () => {
  it('each role lists exactly the jobs it may open, page by page', async () => {
    const started: number[] = [];
    for (const runId of [created[0], created[1], privateRuns[0]]) {
      const r = await post(researcher, `/runs/${runId}/checks`, { kind: 'bootstrap', params: { draws: 19, seed: 1 } });
      expect(r.status).toBe(201);
      started.push(jobResponseSchema.parse(r.body).job.id);
    }
    for (const [name, agent] of [['admin', admin], ['researcher', researcher], ['reviewer', reviewer], ['desk', desk]] as const) {
      const ids: number[] = [];
      let before: number | null = null;
      let total = -1;
      do {
        const qs: string = `?limit=1${before ? `&before=${before}` : ''}`;
        const p = jobsResponseSchema.parse((await agent.get(`/api/v1/jobs${qs}`).expect(200)).body);
        ids.push(...p.jobs.map((j) => j.id));
        expect(p.jobs.every((j) => j.result === null), 'lists carry no results').toBe(true);
        total = p.total;
        before = p.nextCursor;
      } while (before !== null);
      expect(ids.length, name).toBe(total);
      const readable: number[] = [];
      for (const id of started) if ((await agent.get(`/api/v1/jobs/${id}`)).status === 200) readable.push(id);
      // researchers list their own jobs; the others every job they may read
      expect(ids.filter((id) => started.includes(id)).sort((a, b) => a - b), name).toEqual(readable.sort((a, b) => a - b));
    }
    const deskIds = jobsResponseSchema.parse((await desk.get('/api/v1/jobs?limit=500').expect(200)).body).jobs.map((j) => j.id);
    expect(deskIds).not.toContain(started[2]); // the job on the private library
  });
});

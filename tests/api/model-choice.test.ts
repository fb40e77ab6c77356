/**
 * Choosing among models through the API: the squared-Sharpe comparison on the compare route
 * (non-nested, nested → joint spanning test, refusals) and the hold-out deep check (split date,
 * fraction, rolling; refusals; roles).
 *
 * Data: the seeded invented economy of runs-fixture.ts plus CARRY, an independent traded factor
 * with a positive mean (so three traded factors that are not collinear: MKT, ECHO, CARRY), and
 * CLIMA, non-traded. Sources named beside each check: numpy (Debian /usr/bin/python3; its values
 * in the committed fixture tests/fixtures/api-model-choice-sharpe.json) on the same generated factor
 * values for θ̂ and its SE; lib/gmm called directly on the same matrices (identity: the server must
 * not change the numbers); identities that must hold.
 */
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, anonymousAgent, expectEnvelope, makeTestApp, tableCounts, type Agent, type TestApp, post } from './helpers';
import { FIX_ASSETS, makeFixture, spec, type Fixture } from './runs-fixture';
import { confirm, prng, uploadCsv } from './libraries-helpers';
import { runReference } from '../gmm/helpers';
import { holdoutPricing, rollingHoldout, spanningTest } from '../../lib/gmm/index';
import { mailSettled } from '../../server/services/runs';
import { compareResponseSchema, runResponseSchema, type Run } from '../../shared/runs';
import { jobResponseSchema, type HoldoutJobResult, type Job } from '../../shared/jobs';

let t: TestApp;
let fx: Fixture;
let admin: Agent;
let researcher: Agent;
let reviewer: Agent;
let desk: Agent;
let ed: number;
let ed2: number;

const KINDS: Record<string, { kind: 'asset' | 'factor' | 'rf'; traded: boolean }> = {
  MKT: { kind: 'factor', traded: true },
  ECHO: { kind: 'factor', traded: true },
  CARRY: { kind: 'factor', traded: true },
  CLIMA: { kind: 'factor', traded: false },
  COMBO: { kind: 'factor', traded: true },
  RF: { kind: 'rf', traded: false },
};

/** The fixture with CARRY added (independent normal draws, mean 0.6% a period). */
function withCarry(f: Fixture): Fixture {
  const rnd = prng(77);
  const g = () => Math.sqrt(-2 * Math.log(Math.max(rnd(), 1e-12))) * Math.cos(2 * Math.PI * rnd());
  const cols = { ...f.cols, CARRY: f.dates.map(() => 0.006 + 0.03 * g()) };
  const names = Object.keys(cols).filter((n) => n !== 'GAPPY');
  const lines = [['date', ...names].join(',')];
  f.dates.forEach((d, i) => lines.push([d, ...names.map((n) => String(cols[n as keyof typeof cols][i]))].join(',')));
  return { dates: f.dates, cols, csv: `${lines.join('\n')}\n` };
}

async function upload(agent: Agent, f: Fixture, name: string): Promise<number> {
  const up = await uploadCsv(agent, f.csv, 'carry-economy.csv');
  if (up.status !== 201) throw new Error(`upload failed ${up.status} ${JSON.stringify(up.body)}`);
  const series = (up.body.upload.columns as string[]).map((n) => ({ name: n, kind: KINDS[n]?.kind ?? 'asset', traded: KINDS[n]?.traded ?? false }));
  const r = await confirm(agent, up.body.upload.id, { name, visibility: 'shared', units: 'decimal', series });
  if (r.status !== 201) throw new Error(`confirm failed ${r.status} ${JSON.stringify(r.body)}`);
  return r.body.edition.id as number;
}

beforeAll(async () => {
  t = await makeTestApp({ jobMailAfterMs: 60_000 });
  fx = withCarry(makeFixture());
  admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  reviewer = await agentAs(t.app, 'reviewer');
  desk = await agentAs(t.app, 'desk');
  ed = await upload(admin, fx, 'Carry economy');
  ed2 = await upload(admin, fx, '=HYPERLINK("http://x")');
});
afterAll(async () => {
  await mailSettled();
  await t.app.jobRunner.close();
  await t.close();
});

async function startRun(over: Record<string, unknown>, edition = ed): Promise<Run> {
  const r = await post(researcher, '/runs', { editionId: edition, spec: spec({ rf: 'RF', ...over }) });
  if (r.status !== 201 || r.body.run.status !== 'finished') throw new Error(`run not finished: ${r.status} ${JSON.stringify(r.body).slice(0, 400)}`);
  return runResponseSchema.parse(r.body).run;
}
const compare = async (a: number, b: number, extra = '') => compareResponseSchema.parse((await desk.get(`/api/v1/runs/compare?a=${a}&b=${b}${extra}`).expect(200)).body);

/**
 * numpy (Debian /usr/bin/python3, tests/reference/gmm_reference.py `sharpe_task`, written from
 * methods.md: θ̂ = μ'Σ⁻¹μ (divisor T), ψ = 2u − u² + θ̂, Bartlett LRV/T of ψ_A − ψ_B) on the same
 * factor values, through the committed fixture tests/fixtures/api-model-choice-sharpe.json
 * (pythonFixture in tests/gmm/helpers.ts: npm test needs no Python; `npm run fixtures:check` reruns it).
 */
function numpySharpe(F: number[][], a: number[], b: number[], lags: number): { ta: number; tb: number; sa: number; sb: number; se: number } {
  const r = runReference('api-model-choice-sharpe', { task: 'sharpe', factors: F, lags, a, b }) as {
    a: { theta: number; se: number };
    b: { theta: number; se: number };
    se: number;
  };
  return { ta: r.a.theta, tb: r.b.theta, sa: r.a.se, sb: r.b.se, se: r.se };
}

const rel = (x: number, y: number) => Math.abs(x - y) / Math.max(1e-300, Math.abs(y));

describe('compare: squared Sharpe ratios', () => {
  it('non-nested traded models: θ̂_A, θ̂_B, diff, SE, z, p agree with numpy to 1e-8, and the shared factor is named', async () => {
    const A = await startRun({ factors: ['MKT', 'CARRY'] });
    const B = await startRun({ factors: ['ECHO', 'CARRY'] });
    const c = await compare(A.id, B.id);
    expect(c.nested.nested).toBe(false);
    expect(c.sharpeSpanning).toBeNull();
    expect(c.sharpeRefusal).toBeNull();
    const s = c.sharpe!;
    expect(s.a.factors).toEqual(['MKT', 'CARRY']);
    expect(s.b.factors).toEqual(['ECHO', 'CARRY']);
    expect(s.shared).toEqual(['CARRY']);
    expect(s.T).toBe(240);
    expect(s.lags).toBe(A.result!.lags);
    const F = fx.dates.map((_, i) => ['MKT', 'ECHO', 'CARRY'].map((n) => fx.cols[n][i]));
    const ref = numpySharpe(F, [0, 2], [1, 2], s.lags);
    expect(rel(s.a.theta, ref.ta)).toBeLessThan(1e-8);
    expect(rel(s.b.theta, ref.tb)).toBeLessThan(1e-8);
    expect(rel(s.a.se, ref.sa)).toBeLessThan(1e-8);
    expect(rel(s.b.se, ref.sb)).toBeLessThan(1e-8);
    expect(rel(s.se, ref.se)).toBeLessThan(1e-8);
    expect(rel(s.diff, ref.ta - ref.tb)).toBeLessThan(1e-8);
    // identities: z = diff / se; p two-sided normal; swapping the runs flips z and keeps p
    expect(s.z).toBeCloseTo(s.diff / s.se, 12);
    const r = await compare(B.id, A.id);
    expect(r.sharpe!.z).toBeCloseTo(-s.z, 12);
    expect(r.sharpe!.p).toBeCloseTo(s.p, 12);
    // the runs' estimation options do not enter θ̂: a first-stage run of model B gives the same test
    const B1 = await startRun({ factors: ['ECHO', 'CARRY'], stage: 'first' });
    expect((await compare(A.id, B1.id)).sharpe!.z).toBeCloseTo(s.z, 12);
  });

  it('nested models: no z test; the joint spanning test of the extra factor on the smaller model’s, with the reason (equal to lib/gmm spanningTest)', async () => {
    const small = await startRun({ factors: ['MKT'] });
    const large = await startRun({ factors: ['MKT', 'CARRY'] });
    const c = await compare(small.id, large.id);
    expect(c.sharpe).toBeNull();
    const sp = c.sharpeSpanning!;
    expect(sp.larger).toBe('b');
    expect(sp.factors).toEqual(['CARRY']);
    expect(sp.on).toEqual(['MKT']);
    expect(sp.shared).toEqual(['MKT']);
    expect(sp.reason).toMatch(/nested/);
    expect(sp.reason).toMatch(/spanned/);
    // identity: the same test as lib/gmm's spanning test of CARRY on MKT with the run's lag
    const F = fx.dates.map((_, i) => [fx.cols.MKT[i], fx.cols.CARRY[i]]);
    const direct = spanningTest({ factors: F, factorNames: ['MKT', 'CARRY'], traded: [true, true], test: ['CARRY'], lags: large.result!.lags }) as { alpha: number; t: number; p: number };
    expect(sp.stat).toBeCloseTo(direct.t * direct.t, 10);
    expect(sp.p).toBeCloseTo(direct.p, 10);
    expect(sp.alpha[0]).toBeCloseTo(direct.alpha, 14);
    // and the nested drop test stays as before beside it
    expect(c.nested.nested).toBe(true);
    expect(c.nested.dropped).toEqual(['CARRY']);
  });

  it('refusals: different editions, windows, assets, lags; a non-traded factor; the same factors — 200 with the reason, 422 envelope with require=sharpe; nothing saved', async () => {
    const A = await startRun({ factors: ['MKT', 'CARRY'] });
    const cases: [Run, RegExp][] = [
      [await startRun({ factors: ['ECHO'] }, ed2), /different library editions/],
      [await startRun({ factors: ['ECHO'], window: { start: fx.dates[12] } }), /different sample windows/],
      [await startRun({ factors: ['ECHO'], assets: FIX_ASSETS.slice(0, 8) }), /different test assets/],
      [await startRun({ factors: ['ECHO'], lags: 2 }), /different HAC lags/],
      [await startRun({ factors: ['ECHO', 'CLIMA'], nonTraded: ['CLIMA'] }), /'CLIMA'.*not a traded factor/],
      [await startRun({ factors: ['MKT', 'CARRY'], stage: 'iterated' }), /same factors/],
    ];
    await mailSettled();
    const before = tableCounts(t.db);
    for (const [B, why] of cases) {
      const c = await compare(A.id, B.id);
      expect(c.sharpe).toBeNull();
      expect(c.sharpeSpanning).toBeNull();
      expect(c.sharpeRefusal!.message).toMatch(why);
      const r = await desk.get(`/api/v1/runs/compare?a=${A.id}&b=${B.id}&require=sharpe`).expect(422);
      expect(expectEnvelope(r.body, 'unprocessable').message).toMatch(why);
    }
    expectEnvelope((await desk.get(`/api/v1/runs/compare?a=${A.id}&b=${cases[1][0].id}&require=nope`).expect(400)).body, 'validation_failed');
    expect(tableCounts(t.db)).toEqual(before);
  });

  it('roles: every signed-in role may compare; signed out 401; a run on a library one cannot read is 404', async () => {
    const A = await startRun({ factors: ['MKT'] });
    const B = await startRun({ factors: ['CARRY'] });
    for (const who of [admin, researcher, reviewer, desk]) expect(compareResponseSchema.parse((await who.get(`/api/v1/runs/compare?a=${A.id}&b=${B.id}`).expect(200)).body).sharpe).not.toBeNull();
    const anon = await anonymousAgent(t.app);
    expectEnvelope((await anon.get(`/api/v1/runs/compare?a=${A.id}&b=${B.id}`).expect(401)).body, 'unauthenticated');
    const up = await uploadCsv(researcher, fx.csv, 'mine.csv');
    const series = (up.body.upload.columns as string[]).map((n) => ({ name: n, kind: KINDS[n]?.kind ?? 'asset', traded: KINDS[n]?.traded ?? false }));
    const priv = await confirm(researcher, up.body.upload.id, { name: 'Private carry', visibility: 'private', units: 'decimal', series });
    const P = await startRun({ factors: ['CARRY'] }, priv.body.edition.id);
    expectEnvelope((await desk.get(`/api/v1/runs/compare?a=${A.id}&b=${P.id}`).expect(404)).body, 'not_found');
  });
});

// ---------------------------------------------------------------- hold-out check

async function startCheck(agent: Agent, id: number, body: unknown): Promise<Job> {
  const r = await post(agent, `/runs/${id}/checks`, body);
  if (r.status !== 201) throw new Error(`check not started: ${r.status} ${JSON.stringify(r.body)}`);
  return jobResponseSchema.parse(r.body).job as Job;
}
async function finished(agent: Agent, id: number): Promise<Job> {
  const end = Date.now() + 60_000;
  for (;;) {
    const j = jobResponseSchema.parse((await agent.get(`/api/v1/jobs/${id}`).expect(200)).body).job as Job;
    if (!['queued', 'running'].includes(j.status)) return j;
    if (Date.now() > end) throw new Error(`job ${id} stuck`);
    await new Promise((r) => setTimeout(r, 50));
  }
}
function matrices(factors: string[]) {
  return {
    returns: fx.dates.map((_, i) => FIX_ASSETS.map((n) => fx.cols[n][i] - fx.cols.RF[i])),
    factors: fx.dates.map((_, i) => factors.map((f) => fx.cols[f][i])),
  };
}
const OPTS = { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false } as const;

describe('hold-out check', () => {
  let run: Run;
  beforeAll(async () => {
    run = await startRun({ factors: ['MKT', 'ECHO'] });
  });

  it('split at a fraction: one unit of progress, and exactly lib/gmm holdoutPricing on the run’s matrices', async () => {
    const job = await startCheck(researcher, run.id, { kind: 'holdout', params: { mode: 'split', fraction: 0.7 } });
    expect(job.kind).toBe('holdout');
    expect(job.total).toBe(1);
    const fin = await finished(researcher, job.id);
    expect(fin.status).toBe('finished');
    expect(fin.done).toBe(1);
    const r = fin.result as HoldoutJobResult;
    expect(r.mode).toBe('split');
    const direct = holdoutPricing({ ...matrices(['MKT', 'ECHO']), factorNames: ['MKT', 'ECHO'], assetNames: FIX_ASSETS, dates: fx.dates, split: { fraction: 0.7 }, options: OPTS });
    expect(r).toEqual(JSON.parse(JSON.stringify({ mode: 'split', ...direct })));
    if (r.mode !== 'split') throw new Error('split expected');
    expect(r.T1 + r.T2).toBe(240);
    expect(r.T1).toBe(168);
    // identity: α₂ = m₂ − prediction; R²_oos = 1 − α₂'α₂ / m₂'m₂ (methods.md)
    r.alpha.forEach((a, i) => expect(a).toBeCloseTo(r.holdoutMean[i] - r.predicted[i], 15));
    const sse = r.alpha.reduce((s, a) => s + a * a, 0);
    const sst = r.holdoutMean.reduce((s, m) => s + m * m, 0);
    expect(r.r2oos).toBeCloseTo(1 - sse / sst, 12);
    expect(r.meanAbsAlpha).toBeCloseTo(r.alpha.reduce((s, a) => s + Math.abs(a), 0) / r.alpha.length, 15);
  });

  it('split at a date (YYYY-MM, and a day inside a month): the first hold-out period is that month', async () => {
    const from = fx.dates[150];
    const fin = await finished(researcher, (await startCheck(researcher, run.id, { kind: 'holdout', params: { from } })).id);
    const r = fin.result as HoldoutJobResult;
    if (r.mode !== 'split') throw new Error('split expected');
    expect(r.split).toBe(150);
    expect(r.splitDate).toBe(from);
    const day = await finished(researcher, (await startCheck(researcher, run.id, { kind: 'holdout', params: { from: `${from}-15` } })).id);
    expect((day.result as { split: number }).split).toBe(150);
  });

  it('rolling: one unit of progress per block, rows equal lib/gmm rollingHoldout (chunked on the server), pooled R²_oos too', async () => {
    const job = await startCheck(researcher, run.id, { kind: 'holdout', params: { mode: 'rolling', length: 60, step: 7 } });
    const direct = rollingHoldout({ ...matrices(['MKT', 'ECHO']), factorNames: ['MKT', 'ECHO'], assetNames: FIX_ASSETS, dates: fx.dates, window: { length: 60, step: 7 }, options: OPTS });
    expect(job.total).toBe(direct.rows.length);
    const fin = await finished(researcher, job.id);
    expect(fin.status).toBe('finished');
    expect(fin.done).toBe(direct.rows.length);
    const r = fin.result as HoldoutJobResult;
    if (r.mode !== 'rolling') throw new Error('rolling expected');
    expect(r.rows).toEqual(JSON.parse(JSON.stringify(direct.rows)));
    expect(r.rows[r.rows.length - 1].blockEnd).toBe(240);
    expect(r.pooledR2oos!).toBeCloseTo(direct.pooledR2oos!, 12);
    expect(r.meanAbsAlpha!).toBeCloseTo(direct.meanAbsAlpha!, 14);
    expect({ ...r, rows: [], pooledR2oos: 0, meanAbsAlpha: 0 }).toEqual(JSON.parse(JSON.stringify({ mode: 'rolling', ...direct, rows: [], pooledR2oos: 0, meanAbsAlpha: 0 })));
  });

  it('refuses a split outside the sample or leaving fewer than N + K + 1 periods on either side, and bad parameters; nothing saved', async () => {
    await mailSettled();
    const before = tableCounts(t.db);
    const refuse = async (params: unknown, status: number, code: string, msg?: RegExp) => {
      const r = await post(researcher, `/runs/${run.id}/checks`, { kind: 'holdout', params });
      expect(r.status).toBe(status);
      const e = expectEnvelope(r.body, code);
      if (msg) expect(e.message).toMatch(msg);
    };
    await refuse({ from: '1990-01' }, 422, 'unprocessable', /outside the run's estimation sample \(2001-01 – 2020-12\)/);
    await refuse({ from: '2031-05' }, 422, 'unprocessable', /outside/);
    await refuse({ from: fx.dates[0] }, 422, 'unprocessable', /outside/);
    await refuse({ from: fx.dates[5] }, 422, 'unprocessable', /5 estimation and 235 hold-out periods.*N \+ K \+ 1 = 13/);
    await refuse({ from: fx.dates[230] }, 422, 'unprocessable', /230 estimation and 10 hold-out/);
    await refuse({ fraction: 0.02 }, 422, 'unprocessable', /N \+ K \+ 1 = 13/);
    await refuse({ mode: 'rolling', length: 10 }, 422, 'unprocessable', /too short for N = 10 assets and K = 2 factors/);
    await refuse({ mode: 'rolling', length: 239 }, 422, 'unprocessable', /needs at least 2/);
    await refuse({ from: '2010-01', fraction: 0.5 }, 400, 'validation_failed');
    await refuse({}, 400, 'validation_failed');
    await refuse({ from: '2010-13' }, 400, 'validation_failed');
    await refuse({ mode: 'rolling' }, 400, 'validation_failed');
    await refuse({ mode: 'rolling', length: 60, step: 1 }, 400, 'validation_failed');
    await refuse({ fraction: 1.5 }, 400, 'validation_failed');
    expect(tableCounts(t.db)).toEqual(before);
  });

  it('roles: reviewer and desk may not start one (403), read it if they can read the run; signed out 401', async () => {
    expectEnvelope((await post(desk, `/runs/${run.id}/checks`, { kind: 'holdout', params: { fraction: 0.5 } }).expect(403)).body, 'forbidden');
    expectEnvelope((await post(reviewer, `/runs/${run.id}/checks`, { kind: 'holdout', params: { fraction: 0.5 } }).expect(403)).body, 'forbidden');
    const anon = await anonymousAgent(t.app);
    expect([401, 403]).toContain((await post(anon, `/runs/${run.id}/checks`, { kind: 'holdout', params: { fraction: 0.5 } })).status);
    const job = await startCheck(admin, run.id, { kind: 'holdout', params: { fraction: 0.5 } });
    const seen = await finished(desk, job.id);
    expect(seen.status).toBe('finished');
    expect((seen.result as { T1: number }).T1).toBe(120);
  });
});

// ---------------------------------------------------------------- exports of the compare view

describe('compare exports', () => {
  it('CSV: both ledgers (model column A/B) and the test between them; numbers round-trip exactly; formula-safe text', async () => {
    const A = await startRun({ factors: ['MKT', 'CARRY'] });
    const B = await startRun({ factors: ['ECHO', 'CARRY'] });
    const c = await compare(A.id, B.id);
    const r = await desk.get(`/api/v1/runs/compare/export.csv?a=${A.id}&b=${B.id}`).expect(200);
    expect(r.headers['content-type']).toMatch(/text\/csv/);
    expect(r.headers['content-disposition']).toMatch(new RegExp(`keelson-compare-${A.id}-${B.id}\\.csv`));
    const rows = Papa.parse<string[]>(r.text, { skipEmptyLines: false }).data;
    const key = new Map(rows.filter((x) => x.length >= 2).map((x) => [x[0], x.slice(1)]));
    expect(key.get('keelson_export')).toEqual(['model comparison']);
    expect(Number(key.get('test_theta_a')![0])).toBe(c.sharpe!.a.theta);
    expect(Number(key.get('test_diff_se')![0])).toBe(c.sharpe!.se);
    expect(Number(key.get('test_z')![0])).toBe(c.sharpe!.z);
    expect(Number(key.get('test_p')![0])).toBe(c.sharpe!.p);
    expect(key.get('test_shared_factors')).toEqual(['CARRY']);
    expect(key.get('units_returns')![0]).toMatch(/decimal return per month/);
    const head = rows.findIndex((x) => x[0] === 'model');
    expect(rows[head].slice(0, 4)).toEqual(['model', 'run_id', 'factor', 'traded']);
    const table = rows.slice(head + 1).filter((x) => x.length > 1);
    expect(table.map((x) => `${x[0]}:${x[2]}`)).toEqual(['A:MKT', 'A:CARRY', 'B:ECHO', 'B:CARRY']);
    const bCol = rows[head].indexOf('b');
    const holm = rows[head].indexOf('p_holm');
    expect(Number(table[2][bCol])).toBe(B.result!.factors[0].b);
    expect(Number(table[3][holm])).toBe(B.result!.factors[1].pHolm);
    // formula-safe: a library named =HYPERLINK(…) is written as text (shared/csv.ts rule, OWASP CSV injection)
    const X = await startRun({ factors: ['ECHO'] }, ed2);
    const x = await desk.get(`/api/v1/runs/compare/export.csv?a=${A.id}&b=${X.id}`).expect(200);
    const xr = Papa.parse<string[]>(x.text).data;
    expect(xr.find((row) => row[0] === 'run_b_library')![1]).toBe(`'=HYPERLINK("http://x")`);
    expect(xr.find((row) => row[0] === 'test')![1]).toBe('none');
    expect(xr.find((row) => row[0] === 'test_reason')![1]).toMatch(/different library editions/);
  });

  it('LaTeX: a table with caption, label, booktabs, units in the heads, $-$ minus, p as on screen; the nested spanning test in the notes', async () => {
    const small = await startRun({ factors: ['MKT'] });
    const large = await startRun({ factors: ['MKT', 'CARRY'] });
    const tex = (await desk.get(`/api/v1/runs/compare/export.tex?a=${small.id}&b=${large.id}`).expect(200)).text;
    expect(tex).toMatch(/\\begin\{table\}\[htbp\]/);
    expect(tex).toMatch(/\\caption\{Two models compared: model A = run \d+ \(MKT;/);
    expect(tex).toContain(`\\label{tab:keelson-compare-${small.id}-${large.id}}`);
    for (const rule of ['\\toprule', '\\midrule', '\\bottomrule']) expect(tex).toContain(rule);
    expect(tex).toContain('$\\lambda$ (\\% per month)');
    expect(tex).toMatch(/joint spanning test of CARRY on MKT, \$\\chi\^2 = [\d.]+\$ \(1 df\)/);
    expect(tex).toMatch(/Drop test of CARRY from run \d+/);
    const body = tex.split('\\midrule')[1].split('\\bottomrule')[0];
    // every number cell: a true minus ($-$), never a bare hyphen before a digit; p below 0.001 as "$<$0.001"
    expect(body).not.toMatch(/(^|[^$])-\d/);
    const rowsTex = tex.split('\n').filter((l) => /^[AB] & /.test(l));
    expect(rowsTex).toHaveLength(3);
    for (const l of rowsTex) expect(l.split(' & ')).toHaveLength(11);
    const mkt = large.result!.factors[0];
    const cell = mkt.pB < 0.001 ? '$<$0.001' : mkt.pB.toFixed(3);
    expect(rowsTex[1]).toContain(` & ${cell} & `);
    expect(tex).toMatch(/not investment advice/);
  });

  it('exports refuse like the compare view (same run twice 400; require=sharpe 422) and need a sign-in', async () => {
    const A = await startRun({ factors: ['MKT'] });
    expectEnvelope((await desk.get(`/api/v1/runs/compare/export.csv?a=${A.id}&b=${A.id}`).expect(400)).body, 'bad_request');
    const N = await startRun({ factors: ['ECHO', 'CLIMA'], nonTraded: ['CLIMA'] });
    expectEnvelope((await desk.get(`/api/v1/runs/compare/export.tex?a=${A.id}&b=${N.id}&require=sharpe`).expect(422)).body, 'unprocessable');
    const anon = await anonymousAgent(t.app);
    expectEnvelope((await anon.get(`/api/v1/runs/compare/export.csv?a=${A.id}&b=${N.id}`).expect(401)).body, 'unauthenticated');
  });
});

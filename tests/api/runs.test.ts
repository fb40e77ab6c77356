/**
 * Runs API: start, read, list, export, compare; validation, failed runs, roles, immutability.
 * Data: the seeded invented economy of runs-fixture.ts (known truth: MKT prices everything, ECHO
 * is a correlated factor with true b = 0).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import Papa from 'papaparse';
import type { Test } from 'supertest';
import { agentAs, expectEnvelope, makeTestApp, tableCounts, type Agent, type TestApp, post } from './helpers';
import { FIX_ASSETS, fixtureLedger, GAP_INDEX, makeFixture, spec, uploadFixture, type Fixture } from './runs-fixture';

import { mailSettled } from '../../server/services/runs';
import { runResponseSchema, runsResponseSchema, compareResponseSchema, type Run } from '../../shared/runs';
import { CSV_FACTOR_COLUMNS } from '../../server/services/exports';

let t: TestApp;
let fx: Fixture;
let admin: Agent;
let researcher: Agent;
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
  shared = await uploadFixture(admin, fx, { name: 'Invented economy', visibility: 'shared' });
  priv = await uploadFixture(researcher, fx, { name: 'My private economy', visibility: 'private' });
});
afterAll(async () => {
  await mailSettled();
  await t.close();
});


async function startRun(agent: Agent, body: unknown): Promise<Run> {
  const r = await post(agent, '/runs', body);
  if (r.status !== 201) throw new Error(`run not started: ${r.status} ${JSON.stringify(r.body)}`);
  return runResponseSchema.parse(r.body).run;
}

/** Excess returns of the fixture over a window, built here independently of the server. */

describe('POST /runs', () => {
  it('estimates synchronously and answers 201 with exactly estimateLedger’s output', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
    expect(run.status).toBe('finished');
    expect(run.error).toBeNull();
    expect(run.keelsonVersion).toMatch(/^\d+\.\d+\.\d+/);
    expect(run.startedAt && run.finishedAt && run.startedAt <= run.finishedAt).toBe(true);
    // The same estimate, computed here from the generated values (raw returns minus RF), must equal the stored result.
    const direct = fixtureLedger(fx, ['MKT', 'ECHO']);
    expect(run.result).toEqual(JSON.parse(JSON.stringify(direct)));
  });

  it('subtracts the risk-free series from the assets and applies the window (means checked by hand)', async () => {
    const from = 24;
    const to = 204; // dates[24] .. dates[203]
    const run = await startRun(researcher, {
      editionId: shared.editionId,
      spec: spec({ rf: 'RF', window: { start: fx.dates[from], end: fx.dates[to - 1] } }),
    });
    expect(run.result!.T).toBe(to - from);
    // identity: mean excess return = (1/T) Σ (R_i − RF) over the window
    FIX_ASSETS.forEach((a, i) => {
      let s = 0;
      for (let k = from; k < to; k++) s += fx.cols[a][k] - fx.cols.RF[k];
      expect(run.result!.pricingErrors[i].meanReturn).toBeCloseTo(s / (to - from), 14);
    });
    const noRf = await startRun(researcher, { editionId: shared.editionId, spec: spec({ window: { start: fx.dates[from], end: fx.dates[to - 1] } }) });
    let s0 = 0;
    for (let k = from; k < to; k++) s0 += fx.cols.A01[k];
    expect(noRf.result!.pricingErrors[0].meanReturn).toBeCloseTo(s0 / (to - from), 14);
  });

  it('shows the known truth of the invented economy: MKT needed and priced, ECHO priced but not needed', async () => {
    // Seeded simulation with known truth (runs-fixture.ts): true b_ECHO = 0, λ_ECHO = Cov(ECHO, MKT)·b ≠ 0.
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
    const byName = Object.fromEntries(run.result!.factors.map((f) => [f.name, f]));
    expect(byName.MKT.verdict).toBe('needed and priced');
    expect(byName.ECHO.verdict).toBe('priced, not needed');
    expect(run.result!.grs).not.toBeNull();
    expect(run.result!.J.df).toBe(FIX_ASSETS.length - 2);
  });

  it('reports a non-traded factor without spanning and without GRS', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', factors: ['MKT', 'CLIMA'], nonTraded: ['CLIMA'] }) });
    const clima = run.result!.factors.find((f) => f.name === 'CLIMA')!;
    expect(clima.traded).toBe(false);
    expect(clima.spanning).toBeNull();
    expect(run.result!.grs).toBeNull();
  });

  it('runs a joint drop set', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', factors: ['MKT', 'ECHO', 'CLIMA'], nonTraded: ['CLIMA'], dropSet: ['ECHO', 'CLIMA'] }) });
    expect(run.result!.jointDrop?.factors).toEqual(['ECHO', 'CLIMA']);
    expect(run.result!.jointDrop?.chi2Drop?.df).toBe(2);
  });

  it('stores a failed run with the reason when a factor is collinear (201, status failed)', async () => {
    const before = tableCounts(t.db);
    const r = await post(researcher, '/runs', { editionId: shared.editionId, spec: spec({ factors: ['MKT', 'ECHO', 'COMBO'] }) });
    expect(r.status).toBe(201);
    const run = runResponseSchema.parse(r.body).run;
    expect(run.status).toBe('failed');
    expect(run.result).toBeNull();
    expect(run.error).toMatch(/COMBO/);
    expect(run.error).toMatch(/linear combination/);
    const after = tableCounts(t.db);
    expect(after.runs).toBe(before.runs + 1);
    const again = await researcher.get(`/api/v1/runs/${run.id}`).expect(200);
    expect(again.body.run.status).toBe('failed');
    expect(again.body.run.error).toBe(run.error);
    // nothing to export from a failed run
    expectEnvelope((await researcher.get(`/api/v1/runs/${run.id}/export.csv`).expect(409)).body, 'conflict');
    expectEnvelope((await researcher.get(`/api/v1/runs/${run.id}/result.json`).expect(409)).body, 'conflict');
  });

  it('fails a run with missing values in the window, naming the series and first date; a window without the gap runs', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ assets: [...FIX_ASSETS, 'GAPPY'] }) });
    expect(run.status).toBe('failed');
    expect(run.error).toContain(`'GAPPY' first on ${fx.dates[GAP_INDEX]}`);
    const ok = await startRun(researcher, { editionId: shared.editionId, spec: spec({ assets: [...FIX_ASSETS, 'GAPPY'], window: { start: fx.dates[GAP_INDEX + 1] } }) });
    expect(ok.status).toBe('finished');
    expect(ok.result!.T).toBe(fx.dates.length - GAP_INDEX - 1);
  });

  it('refuses impossible specs with 400/422 and writes nothing', async () => {
    await mailSettled();
    const before = tableCounts(t.db);
    const cases: { body: unknown; status: number; code: string; msg: RegExp }[] = [
      { body: { editionId: shared.editionId, spec: spec({ factors: [] }) }, status: 400, code: 'validation_failed', msg: /at least one factor/ },
      { body: { editionId: shared.editionId, spec: spec({ factors: ['MKT', 'A01'] }) }, status: 400, code: 'validation_failed', msg: /both as a factor and as a test asset/ },
      { body: { editionId: shared.editionId, spec: spec({ nonTraded: ['A02'] }) }, status: 400, code: 'validation_failed', msg: /not a chosen factor/ },
      { body: { editionId: shared.editionId, spec: spec({ stage: 'fourth' }) }, status: 400, code: 'validation_failed', msg: /stage/ },
      { body: { editionId: shared.editionId, spec: spec({ lags: -1 }) }, status: 400, code: 'validation_failed', msg: /lag/ },
      { body: { editionId: shared.editionId, spec: spec({ level: 0 }) }, status: 400, code: 'validation_failed', msg: /level/ },
      { body: { spec: spec() }, status: 400, code: 'validation_failed', msg: /editionId/ },
      { body: { editionId: shared.editionId }, status: 400, code: 'validation_failed', msg: /spec/ },
      // T = 12 ≤ N + K = 12
      { body: { editionId: shared.editionId, spec: spec({ window: { start: fx.dates[0], end: fx.dates[11] } }) }, status: 422, code: 'unprocessable', msg: /T = 12 periods is too few.*N \+ K = 12/ },
      { body: { editionId: shared.editionId, spec: spec({ factors: ['MKT', 'NOPE'] }) }, status: 422, code: 'unprocessable', msg: /no series 'NOPE'/ },
      { body: { editionId: shared.editionId, spec: spec({ factors: ['MKT', 'RF'] }) }, status: 422, code: 'unprocessable', msg: /risk-free/ },
      { body: { editionId: shared.editionId, spec: spec({ window: { start: '2050-01' } }) }, status: 422, code: 'unprocessable', msg: /no dates/ },
      { body: { editionId: shared.editionId, spec: spec({ lags: 100, window: { end: fx.dates[59] } }) }, status: 422, code: 'unprocessable', msg: /lag of 100/ },
      { body: { editionId: 999999, spec: spec() }, status: 404, code: 'not_found', msg: /edition/ },
    ];
    for (const c of cases) {
      const r = await post(researcher, '/runs', c.body);
      expect(r.status, JSON.stringify(r.body)).toBe(c.status);
      expect(expectEnvelope(r.body, c.code).message).toMatch(c.msg);
    }
    expect(tableCounts(t.db)).toEqual(before);
  });

  it('lets only researchers and admins start runs', async () => {
    await mailSettled();
    const before = tableCounts(t.db);
    for (const a of [reviewer, desk]) {
      const r = await post(a, '/runs', { editionId: shared.editionId, spec: spec() });
      expect(r.status).toBe(403);
      expectEnvelope(r.body, 'forbidden');
    }
    expect(tableCounts(t.db)).toEqual(before);
    expect((await startRun(admin, { editionId: shared.editionId, spec: spec() })).status).toBe('finished');
  });

  it('sends no e-mail for a run that took less than a minute (the default threshold)', async () => {
    // The other side (a run that took longer) is in runs-basis.test.ts, with a threshold of 0 and a fake clock.
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
    await mailSettled();
    const out = await researcher.get('/api/v1/auth/outbox').expect(200);
    const subjects = (out.body.messages as { subject: string }[]).map((m) => m.subject);
    expect(subjects.some((x) => x.includes(`Run #${run.id} `))).toBe(false);
  });
});

describe('reading runs', () => {
  let run: Run;
  beforeAll(async () => {
    run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', dropSet: ['ECHO'] }) });
  });

  it('lets every role read a run on a shared library', async () => {
    for (const a of [admin, researcher, reviewer, desk]) {
      const r = await a.get(`/api/v1/runs/${run.id}`).expect(200);
      expect(r.body.run.result).toEqual(run.result);
    }
  });

  it('hides runs on a private library from those who cannot read it (404, not listed)', async () => {
    const p = await startRun(researcher, { editionId: priv.editionId, spec: spec() });
    await researcher.get(`/api/v1/runs/${p.id}`).expect(200);
    await admin.get(`/api/v1/runs/${p.id}`).expect(200);
    for (const a of [reviewer, desk]) {
      expectEnvelope((await a.get(`/api/v1/runs/${p.id}`).expect(404)).body, 'not_found');
      expectEnvelope((await a.get(`/api/v1/runs/${p.id}/export.csv`).expect(404)).body, 'not_found');
      const list = runsResponseSchema.parse((await a.get('/api/v1/runs').expect(200)).body).runs;
      expect(list.some((x) => x.id === p.id)).toBe(false);
      expect(list.some((x) => x.id === run.id)).toBe(true);
    }
  });

  it('filters the list by status, author, library and spec', async () => {
    const all = runsResponseSchema.parse((await desk.get('/api/v1/runs').expect(200)).body).runs;
    expect(all.length).toBeGreaterThan(3);
    const failed = runsResponseSchema.parse((await desk.get('/api/v1/runs?status=failed').expect(200)).body).runs;
    expect(failed.length).toBeGreaterThan(0);
    expect(failed.every((x) => x.status === 'failed')).toBe(true);
    const me = (await researcher.get('/api/v1/auth/me')).body.user.id as number;
    const mine = runsResponseSchema.parse((await desk.get(`/api/v1/runs?authorId=${me}`).expect(200)).body).runs;
    expect(mine.every((x) => x.authorId === me)).toBe(true);
    const lib = runsResponseSchema.parse((await admin.get(`/api/v1/runs?libraryId=${priv.libraryId}`).expect(200)).body).runs;
    expect(lib.length).toBeGreaterThan(0);
    expect(lib.every((x) => x.libraryId === priv.libraryId)).toBe(true);
    const none = runsResponseSchema.parse((await desk.get('/api/v1/runs?signoff=approved').expect(200)).body).runs;
    expect(none.every((x) => x.signoff === 'approved')).toBe(true);
    expectEnvelope((await desk.get('/api/v1/runs?status=exploded').expect(400)).body, 'validation_failed');
  });

  it('answers GET /runs/:id with the run exactly as POST gave it, spec defaults filled, for runs read in turn', async () => {
    const other = await startRun(researcher, { editionId: shared.editionId, spec: spec({ factors: ['MKT'], level: 0.1 }) });
    const posted = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', dropSet: ['ECHO'] }) });
    // read alternately: each answer carries its own spec (the served spec text is cached by stored text)
    for (let i = 0; i < 2; i++) {
      for (const want of [posted, other]) {
        const got = runResponseSchema.parse((await desk.get(`/api/v1/runs/${want.id}`).expect(200)).body).run;
        expect(got).toEqual(want);
      }
    }
    // a stored spec written without the defaults (as an older version did) is served with them filled
    const stored = JSON.parse((t.db.$client.prepare('select spec from runs where id = ?').get(other.id) as { spec: string }).spec) as Record<string, unknown>;
    delete stored.level;
    delete stored.form;
    t.db.$client.prepare('update runs set spec = ? where id = ?').run(JSON.stringify(stored), other.id);
    const read = runResponseSchema.parse((await desk.get(`/api/v1/runs/${other.id}`).expect(200)).body).run;
    expect(read.spec.form).toBe('centred');
    expect(read.spec.level).toBe(0.05);
    expect(read.spec.factors).toEqual(['MKT']);
  });

  it('serves result.json as stored, equal to the run’s result', async () => {
    const r = await desk.get(`/api/v1/runs/${run.id}/result.json`).expect(200);
    expect(r.headers['content-type']).toMatch(/application\/json/);
    expect(JSON.parse(r.text)).toEqual(run.result);
  });

  it('exports CSV whose numbers equal the API’s exactly (full precision)', async () => {
    const r = await desk.get(`/api/v1/runs/${run.id}/export.csv`).expect(200);
    expect(r.headers['content-type']).toMatch(/text\/csv/);
    const rows = Papa.parse<string[]>(r.text.trim(), { skipEmptyLines: false }).data;
    const head = Object.fromEntries(rows.filter((x) => x.length >= 2).slice(0, 22).map((x) => [x[0], x[1]]));
    expect(head.keelson_version).toBe(run.keelsonVersion);
    expect(head.edition_id).toBe(String(run.editionId));
    expect(JSON.parse(head.spec)).toEqual(run.spec);
    expect(Number(head.J_stat)).toBe(run.result!.J.stat);
    const h = rows.findIndex((x) => x[0] === 'factor');
    expect(rows[h]).toEqual([...CSV_FACTOR_COLUMNS]);
    const col = (name: string) => rows[h].indexOf(name);
    run.result!.factors.forEach((f, k) => {
      const row = rows[h + 1 + k];
      expect(row[0]).toBe(f.name);
      // exact equality, not closeness: the CSV keeps every digit
      expect(Number(row[col('b')])).toBe(f.b);
      expect(Number(row[col('se_b')])).toBe(f.seB);
      expect(Number(row[col('t_b')])).toBe(f.tB);
      expect(Number(row[col('p_b')])).toBe(f.pB);
      expect(Number(row[col('ci_b_low')])).toBe(f.ciB[0]);
      expect(Number(row[col('lambda')])).toBe(f.lambda);
      expect(Number(row[col('se_lambda')])).toBe(f.seLambda);
      expect(Number(row[col('t_lambda')])).toBe(f.tLambda);
      expect(Number(row[col('p_lambda')])).toBe(f.pLambda);
      expect(Number(row[col('drop_chi2')])).toBe(f.chi2Drop!.stat);
      expect(Number(row[col('drop_p')])).toBe(f.chi2Drop!.p);
      expect(Number(row[col('spanning_alpha')])).toBe(f.spanning!.alpha);
      expect(Number(row[col('spanning_t')])).toBe(f.spanning!.t);
      expect(Number(row[col('thin_beta_p')])).toBe(f.thinBeta!.p);
      expect(row[col('verdict')]).toBe(f.verdict);
    });
    const jd = rows.find((x) => x[0] === 'joint_drop_chi2')!;
    expect(Number(jd[1])).toBe(run.result!.jointDrop!.chi2Drop!.stat);
  });

  it('exports a LaTeX table that is well formed (balanced environments, braces, math, 9 cells a row)', async () => {
    const r = await desk.get(`/api/v1/runs/${run.id}/export.tex`).expect(200);
    const tex = r.text;
    expect((tex.match(/\\begin\{tabular\}/g) ?? []).length).toBe(1);
    expect((tex.match(/\\end\{tabular\}/g) ?? []).length).toBe(1);
    const body = tex.split('\n').filter((l) => !l.startsWith('%'));
    const open = (body.join('').match(/(?<!\\)\{/g) ?? []).length;
    const close = (body.join('').match(/(?<!\\)\}/g) ?? []).length;
    expect(open).toBe(close);
    expect(((body.join('').match(/(?<!\\)\$/g) ?? []).length) % 2).toBe(0);
    const spec = tex.match(/\\begin\{tabular\}\{([lrc]+)\}/)![1];
    const cellRows = body.filter((l) => l.endsWith('\\\\') && !l.startsWith('\\multicolumn'));
    expect(cellRows.length).toBe(1 + run.result!.factors.length);
    for (const l of cellRows) expect(l.split(/(?<!\\)&/).length).toBe(spec.length);
    expect(tex).toContain(run.result!.factors[0].b.toFixed(3));
  });

  it('answers 404 for an unknown run and for a malformed id', async () => {
    expectEnvelope((await desk.get('/api/v1/runs/424242').expect(404)).body, 'not_found');
    expectEnvelope((await desk.get('/api/v1/runs/abc').expect(404)).body, 'not_found');
  });
});

describe('immutability and frozen specs', () => {
  it('has no route that changes or deletes a run', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec() });
    for (const m of ['patch', 'put', 'delete'] as const) {
      const r = await (researcher as unknown as Record<string, (u: string) => Test>)[m](`/api/v1/runs/${run.id}`).set('x-csrf-token', researcher.csrf).send({ status: 'queued' });
      expect(r.status).toBe(404);
    }
    // Routes under a run only add things beside it (comments, sign-offs, deep-check jobs); none targets the run itself.
    expect(t.app.routeTable.filter((x) => x.path === '/runs/:id' && x.method !== 'get')).toEqual([]);
    expect(t.app.routeTable.filter((x) => x.path.startsWith('/runs') && !x.path.includes('/checks') && ['patch', 'put', 'delete'].includes(x.method)).map((x) => x.path)).toEqual([]);
    const again = await researcher.get(`/api/v1/runs/${run.id}`).expect(200);
    expect(again.body.run.result).toEqual(run.result);
  });

  it('keeps the frozen spec of a run when its saved spec is edited later', async () => {
    const s = await post(researcher, '/specs', { name: 'Two factors', editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
    expect(s.status).toBe(201);
    const specId = s.body.spec.id as number;
    const run = await startRun(researcher, { specId });
    expect(run.specId).toBe(specId);
    expect(run.specName).toBe('Two factors');
    const before = (await researcher.get(`/api/v1/runs/${run.id}/result.json`)).text;
    const upd = await researcher.put(`/api/v1/specs/${specId}`).set('x-csrf-token', researcher.csrf).send({ name: 'One factor', spec: spec({ factors: ['MKT'] }) });
    expect(upd.status).toBe(200);
    const after = await researcher.get(`/api/v1/runs/${run.id}`).expect(200);
    expect(after.body.run.spec.factors).toEqual(['MKT', 'ECHO']);
    expect(after.body.run.specName).toBe('Two factors');
    expect((await researcher.get(`/api/v1/runs/${run.id}/result.json`)).text).toBe(before);
    // the edited spec runs with its new content
    const run2 = await startRun(researcher, { specId });
    expect(run2.result!.K).toBe(1);
    const bySpec = runsResponseSchema.parse((await desk.get(`/api/v1/runs?specId=${specId}`).expect(200)).body).runs;
    expect(bySpec.map((x) => x.id).sort()).toEqual([run.id, run2.id].sort());
  });

  it('runs a saved spec on another edition with the same series (specId + editionId)', async () => {
    const s = await post(researcher, '/specs', { name: 'Portable', editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
    const other = await startRun(researcher, { specId: s.body.spec.id, editionId: priv.editionId });
    expect(other.editionId).toBe(priv.editionId);
    expect(other.libraryName).toBe('My private economy');
    const same = await startRun(researcher, { specId: s.body.spec.id });
    // the same invented data in both libraries: identical results
    expect(other.result).toEqual(same.result);
    // a reviewer cannot run it (role) and cannot see the private edition run
    expectEnvelope((await post(reviewer, '/runs', { specId: s.body.spec.id, editionId: priv.editionId }).expect(403)).body, 'forbidden');
    expectEnvelope((await reviewer.get(`/api/v1/runs/${other.id}`).expect(404)).body, 'not_found');
  });
});

describe('compare', () => {
  it('gives the drop test of the smaller model against the larger when nested', async () => {
    const small = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', factors: ['MKT'] }) });
    const large = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', factors: ['MKT', 'ECHO'] }) });
    const r = await desk.get(`/api/v1/runs/compare?a=${small.id}&b=${large.id}`).expect(200);
    const c = compareResponseSchema.parse(r.body);
    expect(c.nested.nested).toBe(true);
    expect(c.nested.smallerRunId).toBe(small.id);
    expect(c.nested.largerRunId).toBe(large.id);
    expect(c.nested.dropped).toEqual(['ECHO']);
    // identity: dropping one factor from the larger model with its own W* is the ledger's per-factor drop test
    const echo = large.result!.factors.find((f) => f.name === 'ECHO')!;
    expect(c.nested.test!.stat).toBeCloseTo(echo.chi2Drop!.stat, 12);
    expect(c.nested.test!.df).toBe(1);
    expect(c.nested.test!.p).toBeCloseTo(echo.chi2Drop!.p, 12);
    expect(c.a.id).toBe(small.id);
    expect(c.b.result!.J).toEqual(large.result!.J);
    // order does not matter
    const rev = compareResponseSchema.parse((await desk.get(`/api/v1/runs/compare?a=${large.id}&b=${small.id}`).expect(200)).body);
    expect(rev.nested.test!.stat).toBe(c.nested.test!.stat);
  });

  it('gives a two-factor nested drop test equal to the larger run’s joint drop test', async () => {
    const small = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', factors: ['MKT'] }) });
    const large = await startRun(researcher, {
      editionId: shared.editionId,
      spec: spec({ rf: 'RF', factors: ['MKT', 'ECHO', 'CLIMA'], nonTraded: ['CLIMA'], dropSet: ['ECHO', 'CLIMA'] }),
    });
    const c = compareResponseSchema.parse((await desk.get(`/api/v1/runs/compare?a=${small.id}&b=${large.id}`).expect(200)).body);
    expect(c.nested.dropped).toEqual(['ECHO', 'CLIMA']);
    expect(c.nested.test!.df).toBe(2);
    expect(c.nested.test!.stat).toBeCloseTo(large.result!.jointDrop!.chi2Drop!.stat, 12);
  });

  it('says why runs are not nested', async () => {
    const a = await startRun(researcher, { editionId: shared.editionId, spec: spec({ factors: ['MKT'] }) });
    const cases: [Record<string, unknown>, RegExp][] = [
      [{ factors: ['MKT', 'ECHO'], assets: FIX_ASSETS.slice(0, 8) }, /test assets/],
      [{ factors: ['MKT', 'ECHO'], window: { start: fx.dates[12] } }, /window/],
      [{ factors: ['MKT', 'ECHO'], stage: 'iterated' }, /stage/],
      [{ factors: ['MKT', 'ECHO'], rf: 'RF' }, /risk-free/],
      [{ factors: ['ECHO'] }, /Neither factor set/],
    ];
    for (const [over, why] of cases) {
      const b = await startRun(researcher, { editionId: shared.editionId, spec: spec(over) });
      const c = compareResponseSchema.parse((await desk.get(`/api/v1/runs/compare?a=${a.id}&b=${b.id}`).expect(200)).body);
      expect(c.nested.nested).toBe(false);
      expect(c.nested.reason).toMatch(why);
      expect(c.nested.test).toBeNull();
    }
    const f1 = await startRun(researcher, { editionId: shared.editionId, spec: spec({ factors: ['MKT'], stage: 'first' }) });
    const f2 = await startRun(researcher, { editionId: shared.editionId, spec: spec({ factors: ['MKT', 'ECHO'], stage: 'first' }) });
    const c = compareResponseSchema.parse((await desk.get(`/api/v1/runs/compare?a=${f1.id}&b=${f2.id}`).expect(200)).body);
    expect(c.nested.nested).toBe(true);
    // First-stage runs get the drop test too (methods.md): W* is the second stage computed from the
    // larger model's first-stage estimate, so it equals the second-stage run's own drop test of ECHO (identity).
    const s2 = await startRun(researcher, { editionId: shared.editionId, spec: spec({ factors: ['MKT', 'ECHO'], stage: 'second' }) });
    const echo = s2.result!.factors.find((f) => f.name === 'ECHO')!;
    expect(c.nested.reason).toBeNull();
    expect(c.nested.test!.df).toBe(1);
    expect(c.nested.test!.stat).toBeCloseTo(echo.chi2Drop!.stat, 12);
    expect(c.nested.test!.p).toBeCloseTo(echo.chi2Drop!.p, 12);
    // and it is the first-stage ledger's own drop test of ECHO (lib/gmm reports it at the first stage)
    expect(c.nested.test!.stat).toBeCloseTo(f2.result!.factors.find((f) => f.name === 'ECHO')!.chi2Drop!.stat, 12);
    expectEnvelope((await desk.get(`/api/v1/runs/compare?a=${a.id}`).expect(400)).body, 'validation_failed');
    expectEnvelope((await desk.get(`/api/v1/runs/compare?a=${a.id}&b=${a.id}`).expect(400)).body, 'bad_request');
  });
});

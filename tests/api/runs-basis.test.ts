/**
 * The basis of the verdict through the API: the spec's basis and bootstrap settings reach the
 * ledger and are frozen into the run; a spec with bootstrap settings starts its bootstrap job with
 * the run and the job's result is merged into the run's ledger when it finishes; a new run on
 * another basis (POST /runs/:id/basis) and a first-stage copy (POST /runs/:id/first-stage-copy);
 * the compare response's bases; the run e-mail after a long run only.
 *
 * Data: the seeded invented economy of runs-fixture.ts (known truth: MKT prices everything, ECHO
 * is correlated with MKT and has true b = 0). Outside checks: lib/gmm called directly on the
 * fixture's matrices built here (identity: the server must not change the numbers), and
 * identities (a new basis does not change the estimates; the first-stage copy equals a run of the
 * same first-stage spec).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, anonymousAgent, expectEnvelope, makeTestApp, tableCounts, type Agent, type TestApp, post } from './helpers';
import { FIX_ASSETS, makeFixture, spec, uploadFixture, waitForMail, type Fixture } from './runs-fixture';
import { bootstrapSdfTests, prepareBootstrap, withBootstrap, type LedgerResult as EngineLedger } from '../../lib/gmm/index';
import { estimateLedger, okOf } from '../gmm/helpers';
import { gmmFailureMessage } from '../../shared/gmm-messages';
import { createRun, mailSettled } from '../../server/services/runs';
import { createUser, findActiveUser } from '../../server/services/users';
import { DEMO_PASSWORD } from '../../server/seed/users';
import { jobResponseSchema, type Job } from '../../shared/jobs';
import { compareResponseSchema, firstStageCopyResponseSchema, runResponseSchema, type Run } from '../../shared/runs';
import type { BootstrapResult } from '../../lib/gmm/index';
import { modelSpecSchema } from '../../shared/specs';

let t: TestApp;
let fx: Fixture;
let admin: Agent;
let researcher: Agent;
let other: Agent;
let reviewer: Agent;
let desk: Agent;
let shared: { libraryId: number; editionId: number };

beforeAll(async () => {
  // Threshold 0: every run and job mails its author (the default, one minute, is tested in runs.test.ts and below).
  t = await makeTestApp({ jobMailAfterMs: 0 });
  fx = makeFixture();
  admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  reviewer = await agentAs(t.app, 'reviewer');
  desk = await agentAs(t.app, 'desk');
  await createUser(t.db, { email: 'second.researcher@keelson.test', name: 'Second Researcher', role: 'researcher', password: DEMO_PASSWORD });
  other = await anonymousAgent(t.app);
  // the CSRF token rotates on sign-in
  other.csrf = (await other.post('/api/v1/auth/login').set('x-csrf-token', other.csrf).send({ email: 'second.researcher@keelson.test', password: DEMO_PASSWORD }).expect(200)).body.csrfToken;
  shared = await uploadFixture(admin, fx, { name: 'Invented economy', visibility: 'shared' });
});
afterAll(async () => {
  await mailSettled();
  await t.app.jobRunner.close();
  await t.close();
});


async function startRun(agent: Agent, body: unknown): Promise<Run> {
  const r = await post(agent, '/runs', body);
  if (r.status !== 201) throw new Error(`run not started: ${r.status} ${JSON.stringify(r.body)}`);
  return runResponseSchema.parse(r.body).run;
}

async function getRun(agent: Agent, id: number): Promise<Run> {
  return runResponseSchema.parse((await agent.get(`/api/v1/runs/${id}`).expect(200)).body).run;
}

async function getJob(agent: Agent, id: number): Promise<Job> {
  return jobResponseSchema.parse((await agent.get(`/api/v1/jobs/${id}`).expect(200)).body).job as Job;
}

async function waitJob(agent: Agent, id: number, until: (j: Job) => boolean, ms = 60_000): Promise<Job> {
  const end = Date.now() + ms;
  for (;;) {
    const j = await getJob(agent, id);
    if (until(j)) return j;
    if (Date.now() > end) throw new Error(`job ${id} stuck: ${JSON.stringify({ ...j, result: undefined })}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}
const ended = (j: Job) => !['queued', 'running'].includes(j.status);

/** Excess returns (raw minus RF) and factors of the fixture, built here independently of the server. */
function matrices(factors: string[]) {
  const returns: number[][] = [];
  const F: number[][] = [];
  for (let i = 0; i < fx.dates.length; i++) {
    returns.push(FIX_ASSETS.map((n) => fx.cols[n][i] - fx.cols.RF[i]));
    F.push(factors.map((f) => fx.cols[f][i]));
  }
  return { returns, F };
}

const json = <T>(x: T): T => JSON.parse(JSON.stringify(x)) as T;

/** The ledger without the parts a bootstrap or a basis may change. */
function estimates(r: Run['result']) {
  return { b: r!.factors.map((f) => [f.b, f.seB, f.lambda, f.seLambda, f.chi2Drop?.stat ?? null]), J: r!.J, hj: r!.hj, alpha: r!.pricingErrors.map((e) => e.alpha) };
}

describe('the spec’s basis reaches the ledger and is frozen into the run', () => {
  it('second stage: standard by default, frozen as such; no bootstrap job', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
    expect(run.spec.basis).toBe('standard');
    expect(run.result!.basis).toBe('standard');
    expect(run.result!.options.basis).toBe('standard');
    expect(run.result!.options.bootstrap).toBeNull();
    expect(run.bootstrapJobId).toBeNull();
  });

  it('first stage with covariance weighting: robust by default, exactly estimateLedger’s output for those options', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', stage: 'first', weighting: 'covariance' }) });
    expect(run.status).toBe('finished');
    expect(run.spec.basis).toBe('robust');
    const { returns, F } = matrices(['MKT', 'ECHO']);
    const direct = estimateLedger({
      assetNames: FIX_ASSETS,
      returns,
      factorNames: ['MKT', 'ECHO'],
      factors: F,
      traded: [true, true],
      options: { stage: 'first', weighting: 'covariance', lags: 'auto', form: 'centred', factorMeansKnown: false, level: 0.05, basis: 'robust' },
    });
    expect(run.result).toEqual(json(direct));
    expect(run.result!.basis).toBe('robust');
    expect(run.result!.options.weighting).toBe('covariance');
    expect(run.result!.robustNote).toBeNull();
  });

  it('an explicit basis is kept (standard on a first-stage spec)', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', stage: 'first', basis: 'standard' }) });
    expect(run.spec.basis).toBe('standard');
    expect(run.result!.basis).toBe('standard');
  });
});

describe('bootstrap p-values started with the run', () => {
  it('starts a bootstrap job linked to the run; its completion fills result.bootstrap and each factor’s bootstrap p', async () => {
    const before = tableCounts(t.db);
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', bootstrap: { draws: 99, seed: 7 } }) });
    // The run is finished as soon as its ledger is; the bootstrap part is pending.
    expect(run.status).toBe('finished');
    expect(run.bootstrapJobId).toEqual(expect.any(Number));
    expect(run.spec.bootstrap).toEqual({ draws: 99, scheme: 'iid', seed: 7 });
    expect(run.result!.options.bootstrap).toEqual({ draws: 99, scheme: 'iid', seed: 7 });
    expect(run.result!.bootstrap).toBeNull();
    expect(run.result!.factors.every((f) => f.bootstrap === null)).toBe(true);
    const after = tableCounts(t.db);
    expect(after.runs).toBe(before.runs + 1);
    expect(after.jobs).toBe(before.jobs + 1);

    const job = await waitJob(researcher, run.bootstrapJobId!, ended);
    expect(job).toMatchObject({ kind: 'bootstrap', runId: run.id, status: 'finished', done: 99, total: 99 });
    expect(job.params).toEqual({ draws: 99, scheme: 'iid', seed: 7 });
    const filled = await getRun(desk, run.id);
    expect(filled.status).toBe('finished');
    const boot = job.result as BootstrapResult;
    // Outside check: lib/gmm's bootstrap of the same matrices and seed, merged by withBootstrap, is the stored ledger.
    const { returns, F } = matrices(['MKT', 'ECHO']);
    const direct = okOf(bootstrapSdfTests({
      returns,
      factors: F,
      factorNames: ['MKT', 'ECHO'],
      options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 99, seed: 7 },
    })).bootstrap;
    expect(json(boot)).toEqual(json(direct));
    expect(filled.result).toEqual(json(withBootstrap(run.result as unknown as EngineLedger, direct)));
    expect(filled.result!.bootstrap).toMatchObject({ draws: 99, seed: 7, scheme: 'iid', pJ: direct.J.bootstrapP });
    filled.result!.factors.forEach((f, k) => {
      expect(f.bootstrap!.pB).toBe(direct.factors[k].wald.bootstrapP);
      expect(f.bootstrap!.pDrop).toBe(direct.factors[k].drop!.bootstrapP);
      // p = (1 + #{stat* ≥ stat}) / (B' + 1) lies in [1/(B'+1), 1]
      expect(f.bootstrap!.pB).toBeGreaterThanOrEqual(1 / (direct.validDraws + 1));
      expect(f.bootstrap!.pB).toBeLessThanOrEqual(1);
      expect(f.verdicts.bootstrap).not.toBeNull();
    });
    // The estimates themselves are not touched.
    expect(estimates(filled.result)).toEqual(estimates(run.result));
    expect(filled.result!.basis).toBe('standard');
    expect(filled.result!.verdictBasis).toBe(run.result!.verdictBasis);
    // The job mails its author like any deep check (threshold 0 in this app).
    await waitForMail(researcher, new RegExp(`Bootstrap on run #${run.id} finished`));
  });

  it('the run’s drop set goes to the bootstrap (joint p-values where lib/gmm gives them)', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', dropSet: ['ECHO'], bootstrap: { draws: 99, seed: 13 } }) });
    const job = await waitJob(researcher, run.bootstrapJobId!, ended);
    expect(job.status).toBe('finished');
    const { returns, F } = matrices(['MKT', 'ECHO']);
    // The same call the server makes, drop set included (lib/gmm reads it when it computes joint p-values).
    const withDropSet = { dropSet: ['ECHO'] } as object;
    const direct = okOf(bootstrapSdfTests({
      returns,
      factors: F,
      factorNames: ['MKT', 'ECHO'],
      options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 99, seed: 13, ...withDropSet },
    })).bootstrap;
    const filled = await getRun(researcher, run.id);
    expect(filled.result).toEqual(json(withBootstrap(run.result as unknown as EngineLedger, direct)));
    expect(filled.result!.jointDrop!.factors).toEqual(['ECHO']);
  });

  it('basis bootstrap: the verdicts switch to the bootstrap basis once its p-values are in', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', basis: 'bootstrap', bootstrap: { draws: 99, seed: 3, scheme: 'block', blockLength: 6 } }) });
    expect(run.result!.basis).toBe('bootstrap');
    expect(run.result!.verdictBasis).not.toBe('bootstrap'); // pending
    const job = await waitJob(researcher, run.bootstrapJobId!, ended);
    expect(job.status).toBe('finished');
    expect(job.params).toEqual({ draws: 99, scheme: 'block', blockLength: 6, seed: 3 });
    const filled = await getRun(researcher, run.id);
    expect(filled.result!.verdictBasis).toBe('bootstrap');
    expect(filled.result!.bootstrap!.blockLength).toBe(6);
    for (const f of filled.result!.factors) expect(f.verdict).toBe(f.verdicts.bootstrap);
  });

  it('refuses a bootstrap basis without settings, and a block longer than T/2, writing nothing', async () => {
    await mailSettled();
    const before = tableCounts(t.db);
    const a = await post(researcher, '/runs', { editionId: shared.editionId, spec: spec({ basis: 'bootstrap' }) });
    expect(a.status).toBe(400);
    expect(expectEnvelope(a.body, 'validation_failed').message).toMatch(/bootstrap basis needs bootstrap settings/);
    const b = await post(researcher, '/runs', { editionId: shared.editionId, spec: spec({ bootstrap: { draws: 99, scheme: 'block', blockLength: 121 } }) });
    expect(b.status).toBe(422);
    expect(expectEnvelope(b.body, 'unprocessable').message).toMatch(/block of 121 periods is too long for T = 240: the largest allowed is T\/2 = 120/);
    const c = await post(researcher, '/runs', { editionId: shared.editionId, spec: spec({ bootstrap: { draws: 5 } }) });
    expect(c.status).toBe(400);
    expect(expectEnvelope(c.body).message).toMatch(/at least 99 draws/);
    expect(tableCounts(t.db)).toEqual(before);
  });

  it('a cancelled bootstrap leaves the ledger as it was; the job’s status says why', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', bootstrap: { draws: 10_000, seed: 1 } }) });
    await waitJob(researcher, run.bootstrapJobId!, (j) => j.done > 0 || ended(j));
    await post(researcher, `/jobs/${run.bootstrapJobId}/cancel`).expect(200);
    await t.app.jobRunner.waitFor(run.bootstrapJobId!);
    const job = await getJob(desk, run.bootstrapJobId!);
    expect(job.status).toBe('cancelled');
    const after = await getRun(desk, run.id);
    expect(after.status).toBe('finished');
    expect(after.result).toEqual(run.result);
    expect(after.result!.bootstrap).toBeNull();
    expect(after.bootstrapJobId).toBe(run.bootstrapJobId);
  });

  it('a bootstrap whose result does not fit the ledger fails with the reason and leaves the ledger as it was', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', bootstrap: { draws: 10_000, seed: 1 } }) });
    const jobId = run.bootstrapJobId!;
    await post(researcher, `/jobs/${jobId}/cancel`).expect(200);
    await t.app.jobRunner.waitFor(jobId);
    // Make the stored ledger disagree with the bootstrap (a factor renamed), and ask for fewer draws.
    const tampered = run.result!.factors.map((f) => (f.name === 'ECHO' ? { ...f, name: 'ECHO2' } : f));
    const stored = JSON.stringify({ ...run.result, factors: tampered });
    t.db.$client.prepare('update runs set result = ? where id = ?').run(stored, run.id);
    t.db.$client.prepare('update jobs set params = ? where id = ?').run(JSON.stringify({ draws: 19, scheme: 'iid', seed: 1 }), jobId);
    await post(researcher, `/jobs/${jobId}/restart`).expect(200);
    const job = await waitJob(researcher, jobId, ended);
    expect(job.status).toBe('failed');
    expect(job.error).toMatch(new RegExp(`could not be added to run #${run.id}'s ledger.*ECHO`));
    expect(job.result).toBeNull();
    const after = t.db.$client.prepare('select result from runs where id = ?').get(run.id) as { result: string };
    expect(after.result).toBe(stored);
  });

  it('a bootstrap started by hand on a run does not change that run’s ledger', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
    const r = await post(researcher, `/runs/${run.id}/checks`, { kind: 'bootstrap', params: { draws: 19, seed: 2 } }).expect(201);
    const job = await waitJob(researcher, r.body.job.id as number, ended);
    expect(job.status).toBe('finished');
    expect((await getRun(researcher, run.id)).result).toEqual(run.result);
  });

  it('uncentred form: the server adds no refusal of its own and answers as lib/gmm does', async () => {
    // lib/gmm decides whether the bootstrap supports the uncentred form (h2-bootstrap-cli adds it);
    // the server must then start and merge the job, or refuse with lib/gmm's own message and write nothing.
    const { returns, F } = matrices(['MKT', 'ECHO']);
    let libError: string | null = null;
    try {
      const prepared = prepareBootstrap({
        returns,
        factors: F,
        factorNames: ['MKT', 'ECHO'],
        options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'uncentred', factorMeansKnown: false, scheme: 'iid', draws: 99, seed: 5 },
      });
      if (!prepared.ok) libError = gmmFailureMessage(prepared);
    } catch (e) {
      libError = (e as Error).message;
    }
    await mailSettled();
    const before = tableCounts(t.db);
    const r = await post(researcher, '/runs', { editionId: shared.editionId, spec: spec({ rf: 'RF', form: 'uncentred', bootstrap: { draws: 99, seed: 5 } }) });
    const plain = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', form: 'uncentred' }) });
    const byHand = await post(researcher, `/runs/${plain.id}/checks`, { kind: 'bootstrap', params: { draws: 99, seed: 5 } });
    if (libError !== null) {
      expect(r.status).toBe(422);
      expect(expectEnvelope(r.body, 'unprocessable').message).toBe(libError);
      expect(byHand.status).toBe(422);
      expect(expectEnvelope(byHand.body, 'unprocessable').message).toBe(libError);
      const after = tableCounts(t.db);
      expect(after.jobs).toBe(before.jobs);
      expect(after.runs).toBe(before.runs + 1); // only the plain run
    } else {
      expect(r.status).toBe(201);
      const run = runResponseSchema.parse(r.body).run;
      const job = await waitJob(researcher, run.bootstrapJobId!, ended);
      expect(job.status).toBe('finished');
      expect((await getRun(researcher, run.id)).result!.bootstrap).not.toBeNull();
      expect(byHand.status).toBe(201);
    }
  });
});

describe('POST /runs/:id/basis: a new run on another basis', () => {
  let source: Run;
  let specId: number;
  beforeAll(async () => {
    const s = await post(researcher, '/specs', { name: 'Market and echo', editionId: shared.editionId, spec: spec({ rf: 'RF' }) }).expect(201);
    specId = s.body.spec.id as number;
    source = await startRun(researcher, { specId });
  });

  it('answers 201 with a new run of the same spec and edition; the estimates are those of the source run', async () => {
    const r = await post(researcher, `/runs/${source.id}/basis`, { basis: 'bootstrap', bootstrap: { draws: 99, seed: 11 } });
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    const run = runResponseSchema.parse(r.body).run;
    expect(run.id).not.toBe(source.id);
    expect(run).toMatchObject({ specId, specName: 'Market and echo', editionId: source.editionId, status: 'finished' });
    expect(run.spec).toEqual({ ...source.spec, basis: 'bootstrap', bootstrap: { draws: 99, scheme: 'iid', seed: 11 } });
    expect(run.result!.basis).toBe('bootstrap');
    expect(estimates(run.result)).toEqual(estimates(source.result)); // identity: the basis does not change the estimates
    expect(run.bootstrapJobId).toEqual(expect.any(Number));
    await waitJob(researcher, run.bootstrapJobId!, ended);
    expect((await getRun(researcher, run.id)).result!.verdictBasis).toBe('bootstrap');
    // the source run is untouched
    expect(await getRun(researcher, source.id)).toEqual(source);
  });

  it('fills default bootstrap settings when the body gives none', async () => {
    const r = await post(researcher, `/runs/${source.id}/basis`, { basis: 'bootstrap' }).expect(201);
    const run = runResponseSchema.parse(r.body).run;
    expect(run.spec.bootstrap).toEqual({ draws: 999, scheme: 'iid', seed: 1 });
    await post(researcher, `/jobs/${run.bootstrapJobId}/cancel`).expect(200);
    await t.app.jobRunner.waitFor(run.bootstrapJobId!);
  });

  it('refuses robust on a second-stage run with 422 pointing to the first-stage copy; nothing is saved', async () => {
    await mailSettled();
    const before = tableCounts(t.db);
    const r = await post(researcher, `/runs/${source.id}/basis`, { basis: 'robust' });
    expect(r.status).toBe(422);
    const e = expectEnvelope(r.body, 'unprocessable');
    expect(e.message).toMatch(/robust basis needs a first-stage run/);
    expect(e.message).toMatch(/second-stage/);
    expect(e.message).toContain(`/runs/${source.id}/first-stage-copy`);
    const iter = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', stage: 'iterated' }) });
    await mailSettled();
    const mid = tableCounts(t.db);
    const ri = await post(researcher, `/runs/${iter.id}/basis`, { basis: 'robust' });
    expect(ri.status).toBe(422);
    expect(expectEnvelope(ri.body).message).toMatch(/iterated.*first-stage copy/);
    expect(tableCounts(t.db)).toEqual(mid);
    expect(mid.runs).toBe(before.runs + 1);
  });

  it('refuses what would change nothing (422), a malformed body (400), an unknown run (404) and a failed run (409)', async () => {
    await mailSettled();
    const failed = await post(researcher, '/runs', { editionId: shared.editionId, spec: spec({ factors: ['MKT', 'ECHO', 'COMBO'] }) }).expect(201);
    expect(failed.body.run.status).toBe('failed');
    await mailSettled();
    const before = tableCounts(t.db);
    const same = await post(researcher, `/runs/${source.id}/basis`, { basis: 'standard' });
    expect(same.status).toBe(422);
    expect(expectEnvelope(same.body).message).toMatch(/already rests on the standard basis/);
    expectEnvelope((await post(researcher, `/runs/${source.id}/basis`, { basis: 'wobbly' }).expect(400)).body, 'validation_failed');
    expectEnvelope((await post(researcher, `/runs/${source.id}/basis`, {}).expect(400)).body, 'validation_failed');
    expectEnvelope((await post(researcher, `/runs/${source.id}/basis`, { basis: 'standard', extra: 1 }).expect(400)).body, 'validation_failed');
    expectEnvelope((await post(researcher, '/runs/999999/basis', { basis: 'standard' }).expect(404)).body, 'not_found');
    expectEnvelope((await post(researcher, '/runs/abc/basis', { basis: 'standard' }).expect(404)).body, 'not_found');
    const f = await post(researcher, `/runs/${failed.body.run.id}/basis`, { basis: 'bootstrap' });
    expect(f.status).toBe(409);
    expect(expectEnvelope(f.body, 'conflict').message).toMatch(/failed/);
    expect(tableCounts(t.db)).toEqual(before);
  });

  it('a first-stage run moves from robust to standard', async () => {
    const fs = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', stage: 'first' }) });
    const r = await post(researcher, `/runs/${fs.id}/basis`, { basis: 'standard' }).expect(201);
    const run = runResponseSchema.parse(r.body).run;
    expect(run.spec.basis).toBe('standard');
    expect(run.result!.basis).toBe('standard');
    expect(run.result!.verdictBasis).toBe('standard');
    expect(estimates(run.result)).toEqual(estimates(fs.result));
  });

  it('roles: the author and admins; another researcher, reviewer and desk are refused (403), nothing saved', async () => {
    await mailSettled();
    const before = tableCounts(t.db);
    for (const a of [other, reviewer, desk]) {
      const r = await post(a, `/runs/${source.id}/basis`, { basis: 'bootstrap', bootstrap: { draws: 99 } });
      expect(r.status, JSON.stringify(r.body)).toBe(403);
      expectEnvelope(r.body, 'forbidden');
    }
    expect(expectEnvelope((await post(other, `/runs/${source.id}/basis`, { basis: 'standard' })).body).message).toMatch(/only its author or an admin/);
    expect(tableCounts(t.db)).toEqual(before);
    const byAdmin = await post(admin, `/runs/${source.id}/basis`, { basis: 'bootstrap', bootstrap: { draws: 99, seed: 4 } });
    expect(byAdmin.status).toBe(201);
    const run = runResponseSchema.parse(byAdmin.body).run;
    expect(run.authorName).toBe('Ada Quarrier');
    await waitJob(admin, run.bootstrapJobId!, ended);
  });
});

describe('POST /runs/:id/first-stage-copy', () => {
  it('copies a saved spec’s run to "<name> (first stage)" with basis robust, saved with its run', async () => {
    const s = await post(researcher, '/specs', { name: 'Iterated pair', editionId: shared.editionId, spec: spec({ rf: 'RF', stage: 'iterated', weighting: 'second-moment', dropSet: ['ECHO'] }) }).expect(201);
    const src = await startRun(researcher, { specId: s.body.spec.id });
    await mailSettled();
    const before = tableCounts(t.db);
    const r = await post(researcher, `/runs/${src.id}/first-stage-copy`);
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    const { run, spec: saved } = firstStageCopyResponseSchema.parse(r.body);
    const after = tableCounts(t.db);
    expect(after.model_specs).toBe(before.model_specs + 1);
    expect(after.runs).toBe(before.runs + 1);
    expect(saved).not.toBeNull();
    expect(saved!).toMatchObject({ name: 'Iterated pair (first stage)', copiedFromId: s.body.spec.id, editionId: shared.editionId, archivedAt: null });
    expect(saved!.spec).toEqual({ ...src.spec, stage: 'first', basis: 'robust' });
    expect(run).toMatchObject({ specId: saved!.id, specName: 'Iterated pair (first stage)', editionId: src.editionId, status: 'finished' });
    expect(run.spec).toEqual(saved!.spec);
    expect(run.result!.stage).toBe('first');
    expect(run.result!.basis).toBe('robust');
    expect(run.result!.robustNote).toBeNull();
    expect(run.result!.options.weighting).toBe('second-moment');
    // identity: the copy's run equals a run of the same first-stage spec started directly
    const direct = await startRun(researcher, { editionId: shared.editionId, spec: saved!.spec });
    expect(direct.result).toEqual(run.result);
    // the source run still says why it has no robust SEs
    expect(src.result!.robustNote).toMatch(/first-stage copy/);
  });

  it('copies an inline run with spec null; refuses a run that is already first-stage (422) and writes nothing', async () => {
    const src = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF' }), name: 'Quick look' });
    const r = await post(researcher, `/runs/${src.id}/first-stage-copy`).expect(201);
    const out = firstStageCopyResponseSchema.parse(r.body);
    expect(out.spec).toBeNull();
    expect(out.run.specId).toBeNull();
    expect(out.run.specName).toBe('Quick look (first stage)');
    expect(out.run.spec.stage).toBe('first');
    await mailSettled();
    const before = tableCounts(t.db);
    const again = await post(researcher, `/runs/${out.run.id}/first-stage-copy`);
    expect(again.status).toBe(422);
    expect(expectEnvelope(again.body, 'unprocessable').message).toMatch(/already first-stage.*\/basis/);
    expectEnvelope((await post(researcher, '/runs/999999/first-stage-copy').expect(404)).body, 'not_found');
    expect(tableCounts(t.db)).toEqual(before);
  });

  it('roles: the author and admins; another researcher, reviewer and desk are refused (403)', async () => {
    const src = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
    await mailSettled();
    const before = tableCounts(t.db);
    for (const a of [other, reviewer, desk]) expectEnvelope((await post(a, `/runs/${src.id}/first-stage-copy`).expect(403)).body, 'forbidden');
    expect(tableCounts(t.db)).toEqual(before);
    const byAdmin = firstStageCopyResponseSchema.parse((await post(admin, `/runs/${src.id}/first-stage-copy`).expect(201)).body);
    expect(byAdmin.run.authorName).toBe('Ada Quarrier');
  });

  it('declares its roles (and the basis route’s) in the route table walked by the access matrix', () => {
    const table = new Map(t.app.routeTable.map((r) => [`${r.method} ${r.path}`, Array.isArray(r.access) ? [...r.access].join(',') : String(r.access)]));
    expect(table.get('post /runs/:id/basis')).toBe('researcher,admin');
    expect(table.get('post /runs/:id/first-stage-copy')).toBe('researcher,admin');
    expect(table.get('post /specs/:id/archive')).toBe('researcher,admin');
    expect(table.get('post /specs/:id/restore')).toBe('researcher,admin');
  });
});

describe('compare names each run’s basis', () => {
  it('gives basis and verdictBasis of both runs, a note when the verdict bases differ, and the nested test unchanged', async () => {
    const small = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', factors: ['MKT'] }) });
    const large = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF', basis: 'bootstrap', bootstrap: { draws: 99, seed: 9 } }) });
    await waitJob(researcher, large.bootstrapJobId!, ended);
    const c = compareResponseSchema.parse((await desk.get(`/api/v1/runs/compare?a=${small.id}&b=${large.id}`).expect(200)).body);
    expect(c.bases.a).toEqual({ basis: 'standard', verdictBasis: 'standard' });
    expect(c.bases.b).toEqual({ basis: 'bootstrap', verdictBasis: 'bootstrap' });
    expect(c.basisNote).toMatch(new RegExp(`run #${small.id} on the standard basis, run #${large.id} on the bootstrap basis`));
    // the nested test does not depend on the basis: it equals the larger ledger's drop test of ECHO
    const echo = large.result!.factors.find((f) => f.name === 'ECHO')!;
    expect(c.nested.test!.stat).toBeCloseTo(echo.chi2Drop!.stat, 12);
    const plain = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
    const c2 = compareResponseSchema.parse((await desk.get(`/api/v1/runs/compare?a=${small.id}&b=${plain.id}`).expect(200)).body);
    expect(c2.basisNote).toBeNull();
    const failed = await post(researcher, '/runs', { editionId: shared.editionId, spec: spec({ factors: ['MKT', 'ECHO', 'COMBO'] }) }).expect(201);
    const c3 = compareResponseSchema.parse((await desk.get(`/api/v1/runs/compare?a=${small.id}&b=${failed.body.run.id}`).expect(200)).body);
    expect(c3.bases.b).toBeNull();
  });
});

describe('run e-mail only after a long run', () => {
  it('mails the author when the run took at least the threshold (0 in this app)', async () => {
    const run = await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
    const m = await waitForMail(researcher, new RegExp(`Run #${run.id} finished`));
    expect(m.to).toBe('researcher@keelson.test');
    expect(m.text).toContain('not investment advice');
  });

  it('with a fake clock: 61 s of estimation mails, 59 s does not (threshold one minute)', async () => {
    const user = findActiveUser(t.db, (await researcher.get('/api/v1/auth/me')).body.user.id as number)!;
    const clockTaking = (ms: number) => {
      let calls = 0;
      return () => (calls++ === 0 ? 1_000_000 : 1_000_000 + ms);
    };
    const deps = { db: t.db, mailer: t.mailer, runner: t.app.jobRunner, mailAfterMs: 60_000 };
    const long = createRun({ ...deps, clock: clockTaking(61_000) }, user, { editionId: shared.editionId, spec: modelSpecSchema.parse(spec({ rf: 'RF' })) });
    const short = createRun({ ...deps, clock: clockTaking(59_000) }, user, { editionId: shared.editionId, spec: modelSpecSchema.parse(spec({ rf: 'RF' })) });
    const m = await waitForMail(researcher, new RegExp(`Run #${long.id} finished`));
    expect(m.text).toMatch(/finished after 61 s/);
    await mailSettled();
    const subjects = ((await researcher.get('/api/v1/auth/outbox')).body.messages as { subject: string }[]).map((x) => x.subject);
    expect(subjects).toContain(`Run #${long.id} finished`);
    expect(subjects.some((x) => x.startsWith(`Run #${short.id} `))).toBe(false);
  });
});

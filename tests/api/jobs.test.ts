/**
 * Deep checks as background jobs: start on a finished run, progress, result, cancel, restart after
 * an interrupted shutdown, e-mail, validation and roles. The jobs run in real worker threads
 * (piscina, the tsx loader registered by server/jobs/worker.mjs).
 * Data: the seeded invented economy of runs-fixture.ts. Results are checked against lib/gmm called
 * directly on the same matrices (identity: the job must not change the numbers).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, expectEnvelope, makeTestApp, tableCounts, type Agent, type TestApp, post } from './helpers';
import { okOf } from '../gmm/helpers';
import { FIX_ASSETS, fixtureMatrices, getJob, jobEnded, makeFixture, spec, uploadFixture, waitForMail, waitJob as waitJobVia, type Fixture } from './runs-fixture';
import { bootstrapSdfTests, rollingEstimates, subsetSweep } from '../../lib/gmm/index';
import { mailSettled } from '../../server/services/runs';
import { markInterruptedJobs } from '../../server/jobs/runner';
import { jobResponseSchema, jobsResponseSchema, type Job } from '../../shared/jobs';
import { runResponseSchema } from '../../shared/runs';

let t: TestApp;
let fx: Fixture;
let admin: Agent;
let researcher: Agent;
let reviewer: Agent;
let desk: Agent;
let runId: number;
let privateRunId: number;

beforeAll(async () => {
  t = await makeTestApp({ jobMailAfterMs: 0 });
  fx = makeFixture();
  admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  reviewer = await agentAs(t.app, 'reviewer');
  desk = await agentAs(t.app, 'desk');
  const shared = await uploadFixture(admin, fx, { name: 'Invented economy', visibility: 'shared' });
  const priv = await uploadFixture(researcher, fx, { name: 'Private economy', visibility: 'private' });
  runId = (await startRun(researcher, { editionId: shared.editionId, spec: spec({ rf: 'RF' }) })).id;
  privateRunId = (await startRun(researcher, { editionId: priv.editionId, spec: spec({ rf: 'RF' }) })).id;
});
afterAll(async () => {
  await mailSettled();
  await t.app.jobRunner.close();
  await t.close();
});


async function startRun(agent: Agent, body: unknown) {
  const r = await post(agent, '/runs', body);
  if (r.status !== 201) throw new Error(`run not started: ${r.status} ${JSON.stringify(r.body)}`);
  return runResponseSchema.parse(r.body).run;
}

async function startCheck(agent: Agent, id: number, body: unknown): Promise<Job> {
  const r = await post(agent, `/runs/${id}/checks`, body);
  if (r.status !== 201) throw new Error(`check not started: ${r.status} ${JSON.stringify(r.body)}`);
  return jobResponseSchema.parse(r.body).job as Job;
}

const waitJob = (agent: Agent, id: number, until: (j: Job) => boolean, ms = 60_000) => waitJobVia(agent, id, until, ms, 50);
const ended = jobEnded;

const matrices = (factors: string[]) => fixtureMatrices(fx, factors);

describe('deep checks on a finished run', () => {
  it('bootstrap: 201 queued, then finished with exactly lib/gmm’s numbers for the same seed', async () => {
    const job = await startCheck(researcher, runId, { kind: 'bootstrap', params: { draws: 199, seed: 42 } });
    expect(job.kind).toBe('bootstrap');
    expect(['queued', 'running']).toContain(job.status);
    expect(job.total).toBe(199);
    const fin = await waitJob(researcher, job.id, ended);
    expect(fin.status).toBe('finished');
    expect(fin.done).toBe(199);
    expect(fin.etaSeconds).toBeNull();
    expect(fin.startedAt! <= fin.finishedAt!).toBe(true);
    const { returns, F } = matrices(['MKT', 'ECHO']);
    const direct = okOf(bootstrapSdfTests({
      returns,
      factors: F,
      factorNames: ['MKT', 'ECHO'],
      options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 199, seed: 42 },
    })).bootstrap;
    expect(JSON.parse(JSON.stringify(fin.result))).toEqual(JSON.parse(JSON.stringify(direct)));
    // e-mail to the author (threshold lowered to 0 ms for this app; the default is one minute)
    const mail = await waitForMail(researcher, new RegExp(`Bootstrap on run #${runId} finished`));
    expect(mail.to).toBe('researcher@keelson.test');
    expect(mail.text).toMatch(/not investment advice/);
  });

  it('a random seed is chosen and stored when none is given, so a restart repeats the draws', async () => {
    const job = await startCheck(researcher, runId, { kind: 'bootstrap', params: { draws: 19 } });
    expect(typeof job.params.seed).toBe('number');
    await waitJob(researcher, job.id, ended);
  });

  it('subset sweep over candidates beyond the run’s factors equals lib/gmm’s sweep', async () => {
    const job = await startCheck(researcher, runId, { kind: 'subset-sweep', params: { candidates: ['MKT', 'ECHO', 'CLIMA'] } });
    expect(job.total).toBe(7);
    const fin = await waitJob(researcher, job.id, ended);
    expect(fin.status).toBe('finished');
    const { returns, F } = matrices(['MKT', 'ECHO', 'CLIMA']);
    const direct = okOf(subsetSweep({
      returns,
      factors: F,
      factorNames: ['MKT', 'ECHO', 'CLIMA'],
      // the edition's traded flags reach the sweep (squared-Sharpe ranking of the traded candidates)
      traded: [true, true, false],
      options: { lags: 'auto', form: 'centred', factorMeansKnown: false, weighting: 'identity', level: 0.05, topPerSize: 5 },
    })).sweep;
    expect(fin.result).toEqual(JSON.parse(JSON.stringify(direct)));
    expect(direct.thetaRanking!.candidates).toEqual(['MKT', 'ECHO']);
    // known truth of the fixture: MKT alone prices the assets
    const r = fin.result as typeof direct;
    expect(r.bestByHj[0].models[0].factors).toEqual(['MKT']);
  });

  it('rolling window: one point per window, equal to lib/gmm', async () => {
    const job = await startCheck(researcher, runId, { kind: 'rolling', params: { window: 'rolling', length: 120, step: 60 } });
    expect(job.total).toBe(3);
    const fin = await waitJob(researcher, job.id, ended);
    expect(fin.status).toBe('finished');
    const { returns, F } = matrices(['MKT', 'ECHO']);
    const direct = rollingEstimates({
      returns,
      factors: F,
      factorNames: ['MKT', 'ECHO'],
      dates: fx.dates,
      window: { kind: 'rolling', length: 120, step: 60 },
      options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, level: 0.05 },
    });
    expect(fin.result).toEqual(JSON.parse(JSON.stringify(direct)));
  });
});

describe('cancel and restart', () => {
  it('cancels a running job mid-way: status cancelled, no result, progress stops', async () => {
    const job = await startCheck(researcher, runId, { kind: 'bootstrap', params: { draws: 40_000, seed: 1 } });
    const moving = await waitJob(researcher, job.id, (j) => j.done > 0 || ended(j));
    expect(moving.status).toBe('running');
    expect(moving.etaSeconds).not.toBeNull();
    expect(moving.done).toBeLessThan(moving.total);
    const c = await post(researcher, `/jobs/${job.id}/cancel`).expect(200);
    expect(c.body.job.status).toBe('cancelled');
    await t.app.jobRunner.waitFor(job.id);
    const after = await getJob(researcher, job.id);
    expect(after.status).toBe('cancelled');
    expect(after.result).toBeNull();
    expect(after.done).toBeLessThan(40_000);
    // cancelling again is a conflict
    expectEnvelope((await post(researcher, `/jobs/${job.id}/cancel`).expect(409)).body, 'conflict');
  });

  it('boot-time recovery: a job left running is marked interrupted, shows no result, and restarts to finished', async () => {
    const job = await startCheck(researcher, runId, { kind: 'rolling', params: { window: 'expanding', length: 100, step: 35 } });
    const first = await waitJob(researcher, job.id, ended);
    expect(first.status).toBe('finished');
    // Simulate a process that died mid-job: the row still says running, half-way, no result.
    t.db.$client.prepare("update jobs set status = 'running', done = 2, result = null, finished_at = null where id = ?").run(job.id);
    expect(markInterruptedJobs(t.db)).toBe(1); // what boot() calls before serving
    const stuck = await getJob(desk, job.id);
    expect(stuck.status).toBe('interrupted');
    expect(stuck.result).toBeNull();
    expect(stuck.error).toMatch(/restart/);
    // desk may read but not restart
    expectEnvelope((await post(desk, `/jobs/${job.id}/restart`).expect(403)).body, 'forbidden');
    const r = await post(researcher, `/jobs/${job.id}/restart`).expect(200);
    expect(r.body.job.status).toBe('queued');
    expect(r.body.job.attempts).toBe(2);
    const again = await waitJob(researcher, job.id, ended);
    expect(again.status).toBe('finished');
    expect(again.result).toEqual(first.result);
    // a finished job cannot be restarted
    expectEnvelope((await post(researcher, `/jobs/${job.id}/restart`).expect(409)).body, 'conflict');
  });
});

describe('validation (nothing written on refusal)', () => {
  it('refuses bad requests with the envelope and writes nothing', async () => {
    await mailSettled();
    const before = tableCounts(t.db);
    expectEnvelope((await post(researcher, `/runs/${runId}/checks`, { kind: 'jackknife' }).expect(400)).body, 'validation_failed');
    expectEnvelope((await post(researcher, `/runs/${runId}/checks`, { kind: 'bootstrap', params: { draws: 5 } }).expect(400)).body, 'validation_failed');
    expectEnvelope((await post(researcher, `/runs/${runId}/checks`, { kind: 'rolling', params: { length: 500 } }).expect(422)).body, 'unprocessable');
    expectEnvelope((await post(researcher, `/runs/${runId}/checks`, { kind: 'rolling', params: { length: 10 } }).expect(422)).body, 'unprocessable');
    expectEnvelope((await post(researcher, `/runs/${runId}/checks`, { kind: 'subset-sweep', params: { candidates: ['MKT', 'A01'] } }).expect(422)).body, 'unprocessable');
    expectEnvelope((await post(researcher, `/runs/${runId}/checks`, { kind: 'subset-sweep', params: { candidates: ['MKT', 'NOPE'] } }).expect(422)).body, 'unprocessable');
    // above the largest limit of any mode (25): the schema refuses; 16–25: the mode's check (jobs-limits.test.ts)
    const twentySix = Array.from({ length: 26 }, (_, i) => `F${i}`);
    expectEnvelope((await post(researcher, `/runs/${runId}/checks`, { kind: 'subset-sweep', params: { candidates: twentySix } }).expect(400)).body, 'validation_failed');
    expectEnvelope((await post(researcher, `/runs/${runId}/checks`, { kind: 'bootstrap', params: { scheme: 'block', blockLength: 200 } }).expect(422)).body, 'unprocessable');
    expectEnvelope((await post(researcher, '/runs/999999/checks', { kind: 'bootstrap' }).expect(404)).body, 'not_found');
    expectEnvelope((await post(researcher, '/runs/abc/checks', { kind: 'bootstrap' }).expect(404)).body, 'not_found');
    expect(tableCounts(t.db)).toEqual(before);
  });

  it('refuses a rolling window too short for the run’s HAC lag (L must be below a quarter of each window), writing nothing', async () => {
    const lagged = await startRun(researcher, { editionId: 1, spec: spec({ rf: 'RF', lags: 10 }) });
    await mailSettled();
    const before = tableCounts(t.db);
    const r = await post(researcher, `/runs/${lagged.id}/checks`, { kind: 'rolling', params: { length: 40, step: 40 } });
    expect(r.status).toBe(422);
    expect(expectEnvelope(r.body, 'unprocessable').message).toMatch(/too short for the run's HAC lag of 10.*at least 41 periods/);
    expect(tableCounts(t.db)).toEqual(before);
    const ok = await startCheck(researcher, lagged.id, { kind: 'rolling', params: { length: 41, step: 100 } });
    expect((await waitJob(researcher, ok.id, ended)).status).toBe('finished');
  });

  it('refuses a run that did not finish (409)', async () => {
    const failed = await post(researcher, '/runs', { editionId: 1, spec: spec({ assets: [...FIX_ASSETS, 'GAPPY'], rf: 'RF' }) }).expect(201);
    expect(failed.body.run.status).toBe('failed');
    expectEnvelope((await post(researcher, `/runs/${failed.body.run.id}/checks`, { kind: 'bootstrap' }).expect(409)).body, 'conflict');
  });
});

describe('roles and visibility', () => {
  it('reviewer and desk cannot start or cancel; they read jobs of runs they can read', async () => {
    expectEnvelope((await post(desk, `/runs/${runId}/checks`, { kind: 'bootstrap' }).expect(403)).body, 'forbidden');
    expectEnvelope((await post(reviewer, `/runs/${runId}/checks`, { kind: 'bootstrap' }).expect(403)).body, 'forbidden');
    const job = await startCheck(admin, runId, { kind: 'rolling', params: { length: 120, step: 120 } });
    await waitJob(admin, job.id, ended);
    expectEnvelope((await post(desk, `/jobs/${job.id}/cancel`).expect(403)).body, 'forbidden');
    const seen = await getJob(desk, job.id);
    expect(seen.authorName).toBeTruthy();
    const list = jobsResponseSchema.parse((await desk.get('/api/v1/jobs').expect(200)).body).jobs;
    expect(list.some((j) => j.id === job.id)).toBe(true);
    expect(list.every((j) => j.result === null)).toBe(true); // the list carries no results
  });

  it('jobs on a private library are invisible to those who cannot read it (404)', async () => {
    const job = await startCheck(researcher, privateRunId, { kind: 'rolling', params: { length: 120, step: 120 } });
    await waitJob(researcher, job.id, ended);
    expectEnvelope((await desk.get(`/api/v1/jobs/${job.id}`).expect(404)).body, 'not_found');
    expectEnvelope((await reviewer.get(`/api/v1/jobs/${job.id}`).expect(404)).body, 'not_found');
    const deskList = jobsResponseSchema.parse((await desk.get('/api/v1/jobs').expect(200)).body).jobs;
    expect(deskList.some((j) => j.id === job.id)).toBe(false);
    const adminList = jobsResponseSchema.parse((await admin.get('/api/v1/jobs').expect(200)).body).jobs;
    expect(adminList.some((j) => j.id === job.id)).toBe(true);
    // a researcher's list is their own jobs; ?runId= lists one run's jobs
    const mine = jobsResponseSchema.parse((await researcher.get('/api/v1/jobs').expect(200)).body).jobs;
    expect(mine.every((j) => j.authorName === mine[0].authorName)).toBe(true);
    const ofRun = jobsResponseSchema.parse((await researcher.get(`/api/v1/jobs?runId=${runId}`).expect(200)).body).jobs;
    expect(ofRun.some((j) => j.authorId !== mine[0].authorId)).toBe(true); // the admin's job on that run
    // admins may cancel or restart anyone's job
    await post(admin, `/jobs/${job.id}/restart`).expect(409); // finished
  });
});

/**
 * Queue mode end to end: the API (KEELSON_REDIS_URL set) enqueues deep checks as BullMQ flows on a
 * real Debian redis-server, and two `keelson worker` processes (the command users run) compute them.
 *
 * Checks against something outside the queue code: every result must equal lib/gmm called directly
 * and uninterrupted on the same matrices (an identity — queueing, chunking, a killed worker or a
 * restarted API must not change one bit of it), compared as the JSON the API serves.
 * Data: the seeded invented economy of tests/api/runs-fixture.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Redis } from 'ioredis';
import { agentAs, type Agent, post } from '../api/helpers';
import { fixtureMatrices, getJob, jobEnded, makeFixture, spec, uploadFixture, waitJob as waitJobVia, type Fixture } from '../api/runs-fixture';
import { bootstrapSdfTests, subsetSweep, type BootstrapOptions } from '../../lib/gmm/index';
import { openDb, type Db } from '../../server/db/client';
import { createApp, type KeelsonApp } from '../../server/app';
import { createMailer, type Mailer } from '../../server/services/mailer';
import { seedDemoUsers } from '../../server/seed/users';
import { cancelKey, inputKey, flowId } from '../../server/jobs/queue-shared';
import { jobResponseSchema, type Job } from '../../shared/jobs';
import { runResponseSchema } from '../../shared/runs';
import { okOf } from '../gmm/helpers';
import { startWorkerProcess, testRedis, type TestRedis, type WorkerProcess, stopQueueTest } from './redis';

let redis: TestRedis;
let dir: string;
let db: Db;
let mailer: Mailer;
let app: KeelsonApp;
let fx: Fixture;
let researcher: Agent;
let admin: Agent;
let runId: number;
const workers: WorkerProcess[] = [];

function newApp(): KeelsonApp {
  return createApp({ db, mailer, sessionSecret: 'test-secret-test-secret', redisUrl: redis.url, jobMailAfterMs: 3_600_000 });
}

beforeAll(async () => {
  redis = await testRedis();
  dir = mkdtempSync(join(tmpdir(), 'keelson-queue-'));
  db = openDb(join(dir, 'keelson.db'));
  await seedDemoUsers(db);
  mailer = await createMailer();
  app = newApp();
  fx = makeFixture();
  admin = await agentAs(app, 'admin');
  researcher = await agentAs(app, 'researcher');
  const shared = await uploadFixture(admin, fx, { name: 'Invented economy', visibility: 'shared' });
  const r = await post(researcher, '/runs', { editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
  if (r.status !== 201) throw new Error(`run not started: ${r.status} ${JSON.stringify(r.body)}`);
  runId = runResponseSchema.parse(r.body).run.id;
  workers.push(await startWorkerProcess(redis.url), await startWorkerProcess(redis.url));
}, 60_000);

afterAll(() => stopQueueTest({ workers, app, mailer, db, redis, dir }));


async function startCheck(agent: Agent, body: unknown): Promise<Job> {
  const r = await post(agent, `/runs/${runId}/checks`, body);
  if (r.status !== 201) throw new Error(`check not started: ${r.status} ${JSON.stringify(r.body)}`);
  return jobResponseSchema.parse(r.body).job as Job;
}

const waitJob = (agent: Agent, id: number, until: (j: Job) => boolean, ms = 45_000) => waitJobVia(agent, id, until, ms, 40);
const ended = jobEnded;

const matrices = (factors: string[]) => fixtureMatrices(fx, factors);

function directBootstrap(draws: number, seed: number) {
  const { returns, F } = matrices(['MKT', 'ECHO']);
  const options: BootstrapOptions = { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, scheme: 'iid', draws, seed };
  return JSON.parse(JSON.stringify(okOf(bootstrapSdfTests({ returns, factors: F, factorNames: ['MKT', 'ECHO'], options })).bootstrap)) as unknown;
}

describe('queue mode with two worker processes', () => {
  it('a bootstrap is one flow in Redis, its input stored once, and finishes with exactly lib/gmm’s numbers', async () => {
    const job = await startCheck(researcher, { kind: 'bootstrap', params: { draws: 999, seed: 7 } });
    const probe = new Redis(redis.url);
    try {
      // the input is stored once under the flow's key, with a TTL; the chunks carry only ranges
      const key = inputKey(flowId(job.id, 1));
      for (let i = 0; i < 100 && (await probe.exists(key)) === 0; i++) await new Promise((r) => setTimeout(r, 20));
      const ttl = await probe.ttl(key);
      const fin0 = await getJob(researcher, job.id);
      if (!ended(fin0)) {
        expect(ttl).toBeGreaterThan(0);
        const chunk = await probe.hget(`keelson:deep-checks:${flowId(job.id, 1)}-c0`, 'data');
        if (chunk) expect(JSON.parse(chunk)).toEqual({ flow: flowId(job.id, 1), kind: 'bootstrap', from: 0, to: expect.any(Number) });
      }
      const fin = await waitJob(researcher, job.id, ended);
      expect(fin.status).toBe('finished');
      expect(fin.done).toBe(999);
      expect(fin.result).toEqual(directBootstrap(999, 7));
      // once the result is in SQLite the flow and its input are removed from Redis
      for (let i = 0; i < 100 && (await probe.exists(key)) === 1; i++) await new Promise((r) => setTimeout(r, 20));
      expect(await probe.exists(key)).toBe(0);
    } finally {
      probe.disconnect();
    }
  }, 120_000);

  it('a cancel mark left in Redis under the next flow id (another or a reset database: job ids restart) does not touch the new job', async () => {
    const next = (db.$client.prepare('SELECT coalesce(max(id), 0) + 1 AS id FROM jobs').get() as { id: number }).id;
    const probe = new Redis(redis.url);
    try {
      await probe.set(cancelKey(flowId(next, 1)), '1', 'EX', 600);
      const job = await startCheck(researcher, { kind: 'bootstrap', params: { draws: 199, seed: 8 } });
      expect(job.id).toBe(next);
      const fin = await waitJob(researcher, job.id, ended);
      expect(fin.status, fin.error ?? '').toBe('finished');
      expect(fin.result).toEqual(directBootstrap(199, 8));
    } finally {
      probe.disconnect();
    }
  }, 120_000);

  it('a subset sweep through the queue equals lib/gmm’s sweep', async () => {
    const job = await startCheck(researcher, { kind: 'subset-sweep', params: { candidates: ['MKT', 'ECHO', 'CLIMA'] } });
    const fin = await waitJob(researcher, job.id, ended);
    expect(fin).toMatchObject({ status: 'finished', done: 7, error: null });
    const { returns, F } = matrices(['MKT', 'ECHO', 'CLIMA']);
    const direct = subsetSweep({
      returns,
      factors: F,
      factorNames: ['MKT', 'ECHO', 'CLIMA'],
      // the edition's traded flags (runs-fixture.ts FIX_KINDS) reach the sweep for its squared-Sharpe ranking
      traded: [true, true, false],
      options: { lags: 'auto', form: 'centred', factorMeansKnown: false, weighting: 'identity', stage: 'second', level: 0.05 },
    });
    expect(fin.result).toEqual(JSON.parse(JSON.stringify(okOf(direct).sweep)));
  }, 120_000);

  it('lib/gmm’s refusal inside a chunk fails the job once (no retries) with lib/gmm’s own message', async () => {
    // COMBO = MKT + ECHO exactly (runs-fixture.ts): a sweep with all three is refused by lib/gmm
    const job = await startCheck(researcher, { kind: 'subset-sweep', params: { candidates: ['MKT', 'ECHO', 'COMBO'] } });
    const fin = await waitJob(researcher, job.id, ended);
    expect(fin).toMatchObject({ status: 'failed', error: expect.stringMatching(/exact linear combination/) });
  }, 120_000);

  it('a worker started through the launcher (its shebang, as npx runs it) runs node with --single-threaded-gc', () => {
    for (const w of workers) {
      const argv = readFileSync(`/proc/${w.proc.pid}/cmdline`, 'utf8').split('\0');
      expect(argv.indexOf('--single-threaded-gc')).toBeGreaterThan(0);
      expect(argv.indexOf('--single-threaded-gc')).toBeLessThan(argv.indexOf('worker'));
    }
  });

  it('SIGKILL of one worker mid-job: another takes over its chunk (stalled-job recovery), result unchanged', async () => {
    const draws = 6000;
    const job = await startCheck(researcher, { kind: 'bootstrap', params: { draws, seed: 11 } });
    const mid = await waitJob(researcher, job.id, (j) => j.done >= draws * 0.15 || ended(j));
    expect(mid.status).toBe('running');
    const victim = workers[0];
    victim.proc.kill('SIGKILL');
    await victim.exited;
    const fin = await waitJob(researcher, job.id, ended, 240_000);
    expect(fin.status).toBe('finished');
    expect(fin.done).toBe(draws);
    expect(fin.result).toEqual(directBootstrap(draws, 11));
    // a fresh worker for the next tests
    workers[0] = await startWorkerProcess(redis.url);
  }, 300_000);

  it('an API restart mid-job re-attaches to the flow instead of marking it interrupted', async () => {
    const draws = 5000;
    const job = await startCheck(researcher, { kind: 'bootstrap', params: { draws, seed: 12 } });
    await waitJob(researcher, job.id, (j) => j.done > 0 || ended(j));
    // the API stops (its runner stops following; the flow goes on in Redis) …
    await app.jobRunner.close();
    app.close();
    const during = db.$client.prepare('select status from jobs where id = ?').get(job.id) as { status: string };
    expect(during.status).toBe('running');
    // … and a new API process on the same database re-attaches at boot
    app = newApp();
    expect(app.jobRunner.reattach()).toBe(1);
    researcher = await agentAs(app, 'researcher');
    const fin = await waitJob(researcher, job.id, ended, 240_000);
    expect(fin.status).toBe('finished');
    expect(fin.result).toEqual(directBootstrap(draws, 12));
  }, 300_000);

  it('SIGTERM: a worker stops taking chunks, finishes its running one and exits 0; the job finishes on the other', async () => {
    const draws = 3000;
    const job = await startCheck(researcher, { kind: 'bootstrap', params: { draws, seed: 14 } });
    await waitJob(researcher, job.id, (j) => j.done > 0 || ended(j));
    const leaving = workers[1];
    leaving.proc.kill('SIGTERM');
    expect(await leaving.exited).toBe(0);
    expect(leaving.output()).toMatch(/SIGTERM, finishing running chunks[\s\S]*stopped after \d+ chunk\(s\)/);
    const fin = await waitJob(researcher, job.id, ended, 240_000);
    expect(fin.status).toBe('finished');
    expect(fin.result).toEqual(directBootstrap(draws, 14));
    workers[1] = await startWorkerProcess(redis.url);
  }, 300_000);

  it('cancel from a second API client stops the chunks on every worker within a second', async () => {
    const draws = 60_000;
    const job = await startCheck(researcher, { kind: 'bootstrap', params: { draws, seed: 13 } });
    const started = await waitJob(researcher, job.id, (j) => j.done > 0 || ended(j));
    // a job that ended before the cancel would make the 409 below meaningless: say why it ended
    expect(started.status, `job ended before the cancel: ${started.error ?? ''}`).toBe('running');
    const other = await agentAs(app, 'admin'); // a second client
    const t0 = Date.now();
    const r = await post(other, `/jobs/${job.id}/cancel`).expect(200);
    expect(r.body.job.status).toBe('cancelled');
    // both workers are idle within a second: no chunk of the job is active any more
    const probe = new Redis(redis.url);
    try {
      let active = -1;
      while (Date.now() - t0 < 1000) {
        active = await probe.llen('keelson:deep-checks:active');
        if (active === 0) break;
        await new Promise((res) => setTimeout(res, 25));
      }
      expect(active).toBe(0);
      const doneAtCancel = (await getJob(researcher, job.id)).done;
      await new Promise((res) => setTimeout(res, 800));
      const after = await getJob(researcher, job.id);
      expect(after.status).toBe('cancelled');
      expect(after.done).toBe(doneAtCancel);
      expect(after.result).toBeNull();
      expect(await probe.exists(inputKey(flowId(job.id, 1)))).toBe(0);
    } finally {
      probe.disconnect();
    }
  }, 120_000);
});

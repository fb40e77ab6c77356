/**
 * Cancelling a heavy run in queue mode, over a real Debian redis-server. The worker is an
 * in-process `startQueueWorker` (the code `keelson worker` runs) whose pool holds every task until
 * it is aborted (tests/api/helpers.ts holdingPool), so the run's job is certainly on the worker, or
 * certainly waiting in Redis, when the cancel arrives. The cancel comes from another signed-in
 * client (an admin) than the one that started the run.
 *
 * The app and the worker use their own logical Redis database (3), so no other test file's worker
 * takes these jobs. Checked: the worker's task is aborted within one second (pub/sub), the run is stored cancelled
 * and stays so, the job's input leaves Redis and its cancel mark stays; a job still waiting in
 * Redis is removed and never reaches a worker. Data: the invented economy of runs-fixture.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Redis } from 'ioredis';
import { agentAs, holdingPool, post, type Agent } from '../api/helpers';
import { makeFixture, spec, uploadFixture } from '../api/runs-fixture';
import { startQueueWorker, type QueueWorker } from '../../server/jobs/queue-worker';
import { cancelKey, inputKey, runJobId } from '../../server/jobs/queue-shared';
import { runResponseSchema, type Run } from '../../shared/runs';
import { startQueueTestApp, type QueueTestApp, stopQueueTest } from './redis';

let q: QueueTestApp;
let researcher: Agent;
let admin: Agent;
let editionId: number;
let worker: QueueWorker;
let r: Redis;
const { pool, held } = holdingPool(1);

beforeAll(async () => {
  // K = 2 costs 48,000, above 30,000. Its own Redis database: the holding worker below must be the
  // only one that can take these runs' jobs (other files' real workers run meanwhile in CI).
  q = await startQueueTestApp('keelson-cancel-run-', { heavyRunCost: 30_000, runPollMs: 50 }, { offsetIds: 'runs', redisDb: 3 });
  admin = await agentAs(q.app, 'admin');
  researcher = await agentAs(q.app, 'researcher');
  editionId = (await uploadFixture(admin, makeFixture(), { name: 'Invented economy', visibility: 'shared' })).editionId;
  worker = startQueueWorker({ redisUrl: q.url, pool, lockMs: 2000, graceMs: 1000, log: () => undefined });
  await worker.ready();
  r = new Redis(q.url);
}, 60_000);

afterAll(async () => {
  r?.disconnect();
  await worker?.close();
  await stopQueueTest({ ...q });
});

const getRun = async (id: number): Promise<Run> => runResponseSchema.parse((await researcher.get(`/api/v1/runs/${id}`).expect(200)).body).run;
const jobKey = (id: number) => `keelson:deep-checks:${runJobId(id)}`;

async function until(what: string, ok: () => boolean | Promise<boolean>, ms = 20_000): Promise<number> {
  const t0 = Date.now();
  while (!(await ok())) {
    if (Date.now() - t0 > ms) throw new Error(`${what}: not after ${ms} ms`);
    await new Promise((res) => setTimeout(res, 10));
  }
  return Date.now() - t0;
}

async function startHeavy(): Promise<number> {
  const res = await post(researcher, '/runs', { editionId, spec: spec({ rf: 'RF' }) }).expect(202);
  return res.body.run.id as number;
}

describe('cancelling a heavy run on queue workers', () => {
  it('a run estimating on a worker: the worker’s task is aborted within a second, the run stays cancelled', async () => {
    const before = held.length;
    const id = await startHeavy();
    await until('the worker holds the estimation', () => held.length === before + 1);
    const entry = held[before];
    expect(entry.task.op).toBe('estimate');
    expect((await getRun(id)).status).toBe('running');

    const res = await post(admin, `/runs/${id}/cancel`).expect(200);
    expect(res.body.run.status).toBe('cancelled');
    const ms = await until('the worker’s task is aborted', () => entry.aborted, 5_000);
    expect(ms).toBeLessThan(1000);

    await q.app.runEstimator.waitFor(id);
    await until('the stored input is removed from Redis', async () => (await r.exists(inputKey(runJobId(id)))) === 0, 5_000);
    expect(await r.exists(cancelKey(runJobId(id)))).toBe(1);
    await new Promise((res2) => setTimeout(res2, 300)); // a late answer would have arrived by now
    const run = await getRun(id);
    expect(run.status).toBe('cancelled');
    expect(run.result).toBeNull();
    expect(run.error).toBe('Cancelled by Ada Quarrier.');
  }, 60_000);

  it('a run whose job still waits in Redis: the job is removed and never reaches a worker', async () => {
    const before = held.length;
    const busy = await startHeavy(); // occupies the worker's only slot
    await until('the worker holds the first run', () => held.length === before + 1);
    const waiting = await startHeavy();
    await until('the second run’s job is in Redis', async () => (await r.exists(jobKey(waiting))) === 1);
    expect((await getRun(waiting)).status).toBe('running'); // the API follows it

    await post(admin, `/runs/${waiting}/cancel`).expect(200);
    await until('the waiting job is removed', async () => (await r.exists(jobKey(waiting))) === 0, 5_000);
    expect(await r.exists(inputKey(runJobId(waiting)))).toBe(0);

    // free the worker: the cancelled run's job must not be taken up
    await post(researcher, `/runs/${busy}/cancel`).expect(200);
    await until('the first run’s task is aborted', () => held[before].aborted, 5_000);
    await new Promise((res) => setTimeout(res, 1000));
    expect(held.length).toBe(before + 1);
    expect((await getRun(waiting)).status).toBe('cancelled');
    expect((await getRun(busy)).status).toBe('cancelled');
  }, 60_000);
});

/**
 * A Redis outage in queue mode: the job keeps its status (running) with a clear message naming the
 * queue that does not answer — never a silent, frozen progress bar — and when Redis is back the
 * job goes on. The Redis here has no persistence, so the restart loses the flow: the API enqueues
 * it again and, draws being seeded per index, the result is exactly lib/gmm's uninterrupted one
 * (identity check against lib/gmm called directly). A private Debian redis-server is used (it is
 * stopped and started), with one in-process queue worker.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, makeTestApp, type Agent, type TestApp } from '../api/helpers';
import { FIX_ASSETS, makeFixture, spec, uploadFixture, type Fixture } from '../api/runs-fixture';
import { bootstrapSdfTests } from '../../lib/gmm/index';
import { startQueueWorker, type QueueWorker } from '../../server/jobs/queue-worker';
import { mailSettled } from '../../server/services/runs';
import { jobResponseSchema, type Job } from '../../shared/jobs';
import { runResponseSchema } from '../../shared/runs';
import { testRedis, type TestRedis } from './redis';
import { okOf } from '../gmm/helpers';

let redis: TestRedis;
let t: TestApp;
let worker: QueueWorker;
let fx: Fixture;
let researcher: Agent;
let runId: number;

beforeAll(async () => {
  redis = await testRedis({ own: true });
  t = await makeTestApp({ redisUrl: redis.url, jobMailAfterMs: 3_600_000 });
  worker = startQueueWorker({ redisUrl: redis.url, concurrency: 1, lockMs: 2000, log: () => undefined });
  await worker.ready();
  fx = makeFixture();
  const admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  const lib = await uploadFixture(admin, fx, { name: 'Invented economy', visibility: 'shared' });
  const r = await researcher.post('/api/v1/runs').set('x-csrf-token', researcher.csrf).send({ editionId: lib.editionId, spec: spec({ rf: 'RF' }) });
  runId = runResponseSchema.parse(r.body).run.id;
}, 60_000);

afterAll(async () => {
  await mailSettled();
  await worker?.close();
  await t?.app.jobRunner.close();
  await t?.close();
  await redis?.stop();
});

async function getJob(id: number): Promise<Job> {
  const r = await researcher.get(`/api/v1/jobs/${id}`).expect(200);
  return jobResponseSchema.parse(r.body).job as Job;
}
async function waitJob(id: number, until: (j: Job) => boolean, ms = 120_000): Promise<Job> {
  const end = Date.now() + ms;
  for (;;) {
    const j = await getJob(id);
    if (until(j)) return j;
    if (Date.now() > end) throw new Error(`job ${id} stuck: ${JSON.stringify({ ...j, result: undefined })}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

describe('Redis outage in queue mode', () => {
  it('shows a clear message while Redis is down, and the job finishes with the same numbers once it is back', async () => {
    const r = await researcher.post(`/api/v1/runs/${runId}/checks`).set('x-csrf-token', researcher.csrf).send({ kind: 'bootstrap', params: { draws: 3000, seed: 21 } });
    expect(r.status).toBe(201);
    const id = (r.body as { job: Job }).job.id;
    await waitJob(id, (j) => j.done > 0 || j.status !== 'running');
    const down = redis.restart!(4000); // Redis stops for 4 s, then starts empty on the same port
    const seen = await waitJob(id, (j) => /does not answer/.test(j.error ?? '') || !['queued', 'running'].includes(j.status), 20_000);
    expect(seen.status).toBe('running');
    expect(seen.error).toMatch(new RegExp(`The queue at redis://127\\.0\\.0\\.1:\\d+ does not answer .*resumes when it is back`));
    await down;
    const fin = await waitJob(id, (j) => !['queued', 'running'].includes(j.status), 240_000);
    expect(fin).toMatchObject({ status: 'finished', error: null, done: 3000 });
    const returns: number[][] = [];
    const F: number[][] = [];
    for (let i = 0; i < fx.dates.length; i++) {
      returns.push(FIX_ASSETS.map((n) => fx.cols[n][i] - fx.cols.RF[i]));
      F.push(['MKT', 'ECHO'].map((f) => fx.cols[f][i]));
    }
    const direct = bootstrapSdfTests({
      returns,
      factors: F,
      factorNames: ['MKT', 'ECHO'],
      options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 3000, seed: 21 },
    });
    expect(fin.result).toEqual(JSON.parse(JSON.stringify(okOf(direct).bootstrap)));
  }, 300_000);
});

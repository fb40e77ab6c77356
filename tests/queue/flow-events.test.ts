/**
 * The API notices the end of a queued job from BullMQ's event stream (QueueClient.pause), not only
 * at its next poll. Here the polls are an hour apart (jobPollMs, runPollMs), so a deep check and a
 * heavy run that finish at all were woken by their 'completed' event: the first state read after the
 * enqueue sees them waiting, and without the wake the next would come an hour later. Real Debian
 * redis-server (tests/queue/redis.ts) on a logical database of this file's own, one real
 * `keelson worker` process. Checks: the finished bootstrap equals the embedded pool's on the same
 * check (bit-for-bit identity of the two modes, as tests/queue/queue-mode.test.ts); pause() still
 * ends at its time and at an abort when nothing ends.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, makeTestApp, post, type Agent } from '../api/helpers';
import { jobEnded, makeFixture, spec, uploadFixture, waitJob, waitRun } from '../api/runs-fixture';
import { QueueClient } from '../../server/jobs/queue-client';
import { jobResponseSchema } from '../../shared/jobs';
import { runResponseSchema } from '../../shared/runs';
import { startQueueLibraryTest, stopQueueTest, type QueueTestApp, type WorkerProcess } from './redis';

const HOUR = 3_600_000;
let q: QueueTestApp;
let researcher: Agent;
let editionId: number;
let worker: WorkerProcess;

beforeAll(async () => {
  // T = 240, N = 10, K = 2 costs 48,000: above this threshold, so the run is queued
  ({ q, researcher, editionId, worker } = await startQueueLibraryTest('keelson-events-', { heavyRunCost: 30_000, runPollMs: HOUR, jobPollMs: HOUR, jobMailAfterMs: HOUR }, { redisDb: 4 }));
}, 60_000);

afterAll(() => stopQueueTest({ workers: worker ? [worker] : [], ...q }));


describe('the end of a queued job wakes its follower', () => {
  it('a heavy run polled once an hour finishes when its worker does', async () => {
    const r = await post(researcher, '/runs', { editionId, spec: spec({ rf: 'RF' }) });
    expect(r.status).toBe(202);
    const run = await waitRun(researcher, r.body.run.id as number);
    expect(run.status).toBe('finished');
    expect(run.result?.factors.map((f) => f.name)).toEqual(['MKT', 'ECHO']);
  }, 90_000);

  it('a bootstrap polled once an hour finishes with all its draws, as the embedded pool gives them', async () => {
    const sync = await post(researcher, '/runs', { editionId, spec: spec({ rf: 'RF', factors: ['MKT'] }) });
    expect(sync.status).toBe(201); // K = 1 costs 24,000: below the threshold
    const runId = runResponseSchema.parse(sync.body).run.id;
    const r = await post(researcher, `/runs/${runId}/checks`, { kind: 'bootstrap', params: { draws: 199, seed: 9 } });
    expect(r.status).toBe(201);
    const job = jobResponseSchema.parse(r.body).job;
    const fin = await waitJob(researcher, job.id, jobEnded, 60_000);
    expect(fin.status).toBe('finished');
    expect(fin.done).toBe(199);

    // the same invented library, run and check on an app without Redis: its own pool computes it
    const embedded = await makeTestApp({ jobMailAfterMs: HOUR });
    try {
      const admin = await agentAs(embedded.app, 'admin');
      const res = await agentAs(embedded.app, 'researcher');
      const ed = (await uploadFixture(admin, makeFixture(), { name: 'Invented economy', visibility: 'shared' })).editionId;
      const run2 = runResponseSchema.parse((await post(res, '/runs', { editionId: ed, spec: spec({ rf: 'RF', factors: ['MKT'] }) })).body).run.id;
      const j2 = jobResponseSchema.parse((await post(res, `/runs/${run2}/checks`, { kind: 'bootstrap', params: { draws: 199, seed: 9 } })).body).job;
      const fin2 = await waitJob(res, j2.id, jobEnded, 60_000);
      expect(fin2.status).toBe('finished');
      expect(fin.result).toEqual(fin2.result);
    } finally {
      await embedded.app.jobRunner.close();
      await embedded.close();
    }
  }, 120_000);

  it('pause() ends at its time, or at an abort, when no job ends', async () => {
    const c = new QueueClient(q.url);
    try {
      const t0 = Date.now();
      await c.pause('no-such-flow', 30, new AbortController().signal);
      expect(Date.now() - t0).toBeGreaterThanOrEqual(25);
      const ac = new AbortController();
      const waiting = c.pause('no-such-flow', HOUR, ac.signal);
      ac.abort();
      await waiting; // resolves: an hour's pause that ended at the abort
    } finally {
      await c.close();
    }
  });
});

/**
 * A typed numerical failure from lib/gmm inside a queue worker's chunk (server/jobs/pool.ts
 * ChunkFailedError) is the same on every try: the worker turns it into BullMQ's
 * UnrecoverableError, so the job fails once, with the message mapped in shared/gmm-messages.ts,
 * and no chunk is attempted twice. Real Debian redis-server (tests/queue/redis.ts); the
 * worker runs in process with a pool that answers the first bootstrap chunk with the typed failure
 * lib/gmm returns for an exactly singular X'WX (tests/gmm/failure-model.test.ts builds such data).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, makeTestApp, type Agent, type TestApp } from '../api/helpers';
import { jobEnded, makeFixture, spec, uploadFixture, waitJob } from '../api/runs-fixture';
import { ChunkFailedError, createJobPool, type JobPool } from '../../server/jobs/pool';
import type { ChunkTask } from '../../server/jobs/tasks';
import { startQueueWorker, type QueueWorker } from '../../server/jobs/queue-worker';
import { mailSettled } from '../../server/services/runs';
import { gmmFailureMessage } from '../../shared/gmm-messages';
import { gmmFailure } from '../../lib/gmm/index';
import { runResponseSchema } from '../../shared/runs';
import { jobResponseSchema, type Job } from '../../shared/jobs';
import { testRedis, type TestRedis } from './redis';

const failure = gmmFailure('singular', "X'WX is singular on these data.", "X'WX");
let redis: TestRedis;
let t: TestApp;
let worker: QueueWorker;
let realPool: JobPool;
let researcher: Agent;
let runId: number;
/** Every chunk the pool was asked for, as op:from. */
const chunkCalls: string[] = [];

beforeAll(async () => {
  redis = await testRedis({ own: true });
  t = await makeTestApp({ redisUrl: redis.url, jobMailAfterMs: 3_600_000 });
  realPool = createJobPool({ threads: 1 });
  const failing: JobPool = {
    threads: 1,
    get queued() {
      return realPool.queued;
    },
    run<T>(task: ChunkTask, signal?: AbortSignal): Promise<T> {
      chunkCalls.push(`${task.op}:${'from' in task ? task.from : ''}`);
      if (task.op === 'bootstrap') return Promise.reject(new ChunkFailedError(failure));
      return realPool.run<T>(task, signal);
    },
    destroy: () => realPool.destroy(),
  };
  worker = startQueueWorker({ redisUrl: redis.url, concurrency: 1, lockMs: 2000, log: () => undefined, pool: failing });
  await worker.ready();
  const admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  const lib = await uploadFixture(admin, makeFixture(), { name: 'Invented economy', visibility: 'shared' });
  const r = await researcher.post('/api/v1/runs').set('x-csrf-token', researcher.csrf).send({ editionId: lib.editionId, spec: spec({ rf: 'RF' }) });
  runId = runResponseSchema.parse(r.body).run.id;
}, 60_000);

afterAll(async () => {
  await mailSettled();
  await worker?.close();
  await realPool?.destroy();
  await t?.app.jobRunner.close();
  await t?.close();
  await redis?.stop();
});

describe('a typed lib/gmm failure in a queue chunk', () => {
  it('fails the job once with the mapped message; the chunk is not retried', async () => {
    const r = await researcher.post(`/api/v1/runs/${runId}/checks`).set('x-csrf-token', researcher.csrf).send({ kind: 'bootstrap', params: { draws: 199, seed: 3 } });
    expect(r.status).toBe(201);
    const job = jobResponseSchema.parse(r.body).job as Job;
    const fin = await waitJob(researcher, job.id, jobEnded, 60_000);
    expect(fin.status).toBe('failed');
    expect(fin.error).toBe(gmmFailureMessage(failure));
    expect(fin.result).toBeNull();
    // each chunk reached the pool at most once: chunks are enqueued with attempts: 3
    // (queue-client.ts), so a plain error would have been tried again; the summary never ran
    const boots = chunkCalls.filter((c) => c.startsWith('bootstrap:'));
    expect(boots.length).toBeGreaterThanOrEqual(1);
    expect(new Set(boots).size).toBe(boots.length);
    expect(chunkCalls.some((c) => c.startsWith('bootstrap-summary'))).toBe(false);
  }, 90_000);
});

/**
 * Where a queued chunk's value travels: into the flow's hash of parts (queue-shared.ts partsKey),
 * while the chunk job returns only its range, so BullMQ's event stream (read and parsed by every
 * API's QueueEvents) no longer carries the values. Real Debian redis-server (tests/queue/redis.ts),
 * a worker in process on a real one-thread pool.
 *
 * Checks: the result equals lib/gmm's subsetSweep called directly on the same input (an identity
 * that must hold: chunked and merged, or in one pass); every chunk's 'completed' event in the
 * stream is the small range marker; the parts hash has one field per chunk and is gone once the
 * flow is removed; a flow whose chunks returned their values inline (as an earlier release's
 * workers did) still summarises to the same result; a summary whose parts are missing fails once
 * with the remedy in its message, not after retries.
 */
import { Redis } from 'ioredis';
import { Job, Queue, Worker } from 'bullmq';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueueClient } from '../../server/jobs/queue-client';
import { startQueueWorker, type QueueWorker } from '../../server/jobs/queue-worker';
import { createJobPool, type JobPool } from '../../server/jobs/pool';
import { QUEUE_NAME, QUEUE_PREFIX, encode, inputKey, partsKey, type ChunkJobData } from '../../server/jobs/queue-shared';
import { prepareSubsetSweep, subsetSweep, sweepChunk } from '../../lib/gmm/index';
import { sweepCheck } from '../../bench/queue-checks';
import { flowEnded, stopInProcessQueue, testRedis, type TestRedis } from './redis';

let redis: TestRedis;
let q: QueueClient;
let r: Redis;
let pool: JobPool;
let worker: QueueWorker | undefined;
const check = sweepCheck(120, 10, 7, 11); // 127 subsets
/** Three chunks of subset masks − 1, as chunkRanges cuts a bigger sweep. */
const ranges: [number, number][] = [
  [0, 40],
  [40, 80],
  [80, 127],
];

const ended = (flow: string) => flowEnded(q, flow);

/**
 * Takes the flow's chunks from the queue by hand (BullMQ's manual processing, no keelson worker)
 * and completes each with `returned(job data)`, as another release's worker would have.
 */
async function completeChunksByHand(count: number, returned: (d: ChunkJobData) => string): Promise<void> {
  const hand = new Worker(QUEUE_NAME, null, { connection: { url: redis.url }, prefix: QUEUE_PREFIX, autorun: false });
  try {
    for (let i = 0; i < count; i++) {
      const token = `hand-${i}`;
      const job = await hand.getNextJob(token);
      if (!job) throw new Error(`chunk ${i} was not in the queue`);
      expect(job.name).toBe('chunk');
      await job.moveToCompleted(returned(job.data as ChunkJobData), token, false);
    }
  } finally {
    await hand.close();
  }
}

const direct = (() => {
  const d = subsetSweep(check.input);
  if (!d.ok) throw new Error(d.message);
  return d.sweep;
})();

beforeAll(async () => {
  redis = await testRedis({ own: true });
  q = new QueueClient(redis.url);
  r = new Redis(redis.url);
  pool = createJobPool({ threads: 1, nice: 0 });
}, 30_000);

afterAll(() => stopInProcessQueue({ worker, pool, q, r, redis }));

describe('a queued chunk’s value', () => {
  it('goes to the flow’s parts, not into BullMQ’s event stream; the parts leave with the flow', async () => {
    worker = startQueueWorker({ redisUrl: redis.url, concurrency: 1, lockMs: 2000, log: () => undefined, pool });
    await worker.ready();
    await q.enqueue('parts', check, ranges, check.total);
    expect(await ended('parts')).toEqual({ state: 'completed', result: direct });

    const stream = await r.xrange(`${QUEUE_PREFIX}:${QUEUE_NAME}:events`, '-', '+');
    const completed = stream
      .map(([, fields]) => Object.fromEntries(Array.from({ length: fields.length / 2 }, (_, i) => [fields[2 * i], fields[2 * i + 1]])))
      .filter((e) => e.event === 'completed' && /^parts-c\d+$/.test(e.jobId));
    expect(completed).toHaveLength(3);
    for (const e of completed) {
      expect(e.returnvalue.length).toBeLessThan(60);
      // BullMQ writes the processor's string return value as JSON: a JSON string of our JSON
      expect(JSON.parse(JSON.parse(e.returnvalue) as string)).toEqual({ from: expect.any(Number), to: expect.any(Number), stored: true });
    }
    const parts = await r.hgetall(partsKey('parts'));
    expect(Object.keys(parts).sort()).toEqual(['0', '40', '80']);
    expect(await r.ttl(partsKey('parts'))).toBeGreaterThan(0);

    await q.remove('parts');
    expect(await r.exists(partsKey('parts'), inputKey('parts'))).toBe(0);
  }, 60_000);

  it('returned inline by an earlier release’s chunks still summarises to the same result', async () => {
    await worker?.close();
    worker = undefined;
    await q.enqueue('inline', check, ranges, check.total);
    const prepared = prepareSubsetSweep(check.input);
    if (!prepared.ok) throw new Error(prepared.message);
    // the earlier format: {from, to, value} as the job's return value, no parts hash
    await completeChunksByHand(3, (d) => encode({ from: d.from, to: d.to, value: sweepChunk(prepared.plan, d.from + 1, d.to + 1) }));
    expect(await r.exists(partsKey('inline'))).toBe(0);
    worker = startQueueWorker({ redisUrl: redis.url, concurrency: 1, lockMs: 2000, log: () => undefined, pool });
    await worker.ready();
    expect(await ended('inline')).toEqual({ state: 'completed', result: direct });
  }, 60_000);

  it('missing from Redis fails the summary once, with the remedy', async () => {
    await worker?.close();
    worker = undefined;
    await q.enqueue('lost', check, ranges, check.total);
    // markers as today's workers return them, but the parts hash was lost (flushed, or expired)
    await completeChunksByHand(3, (d) => encode({ from: d.from, to: d.to, stored: true }));
    const calls: string[] = [];
    worker = startQueueWorker({
      redisUrl: redis.url,
      concurrency: 1,
      lockMs: 2000,
      log: () => undefined,
      pool: { ...pool, threads: 1, queued: 0, run: (task, signal) => (calls.push(task.op), pool.run(task, signal)) },
    });
    await worker.ready();
    const s = await ended('lost');
    expect(s.state).toBe('failed');
    expect((s as { reason: string }).reason).toMatch(/chunk from 0 is missing from Redis .*restart the job/);
    // not retried: BullMQ gives the summary 3 attempts, 500 ms apart, for other errors
    const queue = new Queue(QUEUE_NAME, { connection: { url: redis.url }, prefix: QUEUE_PREFIX });
    try {
      expect((await Job.fromId(queue, 'lost'))?.attemptsMade).toBe(1);
    } finally {
      await queue.close();
    }
    expect(calls).toEqual([]);
  }, 60_000);
});

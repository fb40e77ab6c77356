/**
 * A queued check's input crosses Redis once, as node:v8's bytes (queue-shared.ts packInput), and a
 * worker hands those bytes to its pool threads without decoding them. Real Debian redis-server
 * (tests/queue/redis.ts), a worker in process on a real one-thread pool. Checks (identities that
 * must hold): the stored bytes are packInput's; a flow whose input was stored as JSON text by an
 * earlier release gives the same result as the binary one, which equals lib/gmm's subsetSweep called
 * directly; bytes no Node.js can read fail the flow once, with the remedy in the message, no retry.
 */
import { Redis } from 'ioredis';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueueClient } from '../../server/jobs/queue-client';
import { startQueueWorker, type QueueWorker } from '../../server/jobs/queue-worker';
import { createJobPool, type JobPool } from '../../server/jobs/pool';
import { chunkRanges } from '../../server/jobs/runner';
import { encode, inputKey, packInput } from '../../server/jobs/queue-shared';
import type { ChunkTask } from '../../server/jobs/tasks';
import { subsetSweep } from '../../lib/gmm/index';
import { sweepCheck } from '../../bench/queue-checks';
import { flowEnded, stopInProcessQueue, testRedis, type TestRedis } from './redis';

let redis: TestRedis;
let q: QueueClient;
let r: Redis;
let pool: JobPool;
let worker: QueueWorker | undefined;
/** The ops the pool was asked for, in order. */
const calls: string[] = [];
const check = sweepCheck(120, 10, 7, 11); // 127 subsets: one chunk
const ranges = chunkRanges(check.total, check.kind);

const ended = (flow: string) => flowEnded(q, flow);

beforeAll(async () => {
  redis = await testRedis({ own: true });
  q = new QueueClient(redis.url);
  r = new Redis(redis.url);
  const real = createJobPool({ threads: 1, nice: 0 });
  pool = {
    threads: 1,
    get queued() {
      return real.queued;
    },
    run<T>(task: ChunkTask, signal?: AbortSignal): Promise<T> {
      calls.push(task.op);
      return real.run<T>(task, signal);
    },
    destroy: () => real.destroy(),
  };
}, 30_000);

afterAll(() => stopInProcessQueue({ worker, pool, q, r, redis }));

describe('the stored input of a queued check', () => {
  it('is packInput’s bytes; a JSON input of an earlier release gives the same result; unreadable bytes fail once', async () => {
    await q.enqueue('binary', check, ranges, check.total);
    await q.enqueue('legacy', check, ranges, check.total);
    await q.enqueue('foreign', check, ranges, check.total);
    const stored = await r.getBuffer(inputKey('binary'));
    expect(stored).not.toBeNull();
    expect(Buffer.compare(stored!, packInput(check.input))).toBe(0);
    // as a release before packInput stored it: {"kind":…,"input":…} as JSON text
    await r.set(inputKey('legacy'), encode({ kind: check.kind, input: check.input }));
    await r.set(inputKey('foreign'), Buffer.from([0xff, 0x7f, 0x6f, 0x7b, 0x00]));

    worker = startQueueWorker({ redisUrl: redis.url, concurrency: 1, lockMs: 2000, log: () => undefined, pool });
    await worker.ready();
    const binary = await ended('binary');
    const legacy = await ended('legacy');
    const foreign = await ended('foreign');

    const direct = subsetSweep(check.input);
    if (!direct.ok) throw new Error(direct.message);
    expect(binary).toEqual({ state: 'completed', result: direct.sweep });
    expect(legacy).toEqual(binary);
    expect(foreign.state).toBe('failed');
    expect((foreign as { reason: string }).reason).toMatch(/cannot be read by Node\.js v\d+.*run the API and the workers on the same Node\.js major version/);
    // two flows of one chunk and a summary each, and the foreign flow's one chunk tried once
    expect(calls.filter((c) => c === 'subset-sweep')).toHaveLength(3);
    expect(calls.filter((c) => c === 'subset-sweep-summary')).toHaveLength(2);
  }, 60_000);
});

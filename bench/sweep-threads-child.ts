/**
 * The queue bench's no-queue reference (bench/queue.bench.ts, subset sweeps): a child process
 * started with `node --single-threaded-gc`, as bin/keelson.mjs starts a worker, that runs a sweep's
 * chunks and summary on a pool of two threads in this one process when its parent asks (IPC), and
 * answers the time and the result (queue-shared.ts encode, so non-finite numbers survive). What two
 * threads of this computation give on the machine with no Redis, no BullMQ and no second process.
 */
import { createJobPool } from '../server/jobs/pool';
import { encode } from '../server/jobs/queue-shared';
import { sweepOnPool } from './pool-runs';
import { sweepCheck } from './queue-checks';

interface Ask {
  key: string;
  T: number;
  N: number;
  K: number;
  seed: number;
}

const pool = createJobPool({ threads: 2, nice: 0 });
process.on('message', (m: Ask | 'stop') => {
  if (m === 'stop') {
    void pool.destroy().then(() => process.exit(0));
    return;
  }
  void sweepOnPool(pool, m.key, sweepCheck(m.T, m.N, m.K, m.seed)).then((r) => process.send!({ key: m.key, ms: r.ms, result: encode(r.result) }));
});
process.send!('ready');

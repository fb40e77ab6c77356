/**
 * Deep checks run on a piscina pool the way the embedded runner runs them (server/jobs/runner.ts):
 * for bench/queue.bench.ts and its no-queue reference process (bench/sweep-threads-child.ts).
 */
import { performance } from 'node:perf_hooks';
import type { JobPool } from '../server/jobs/pool';
import type { ChunkTask } from '../server/jobs/tasks';
import { chunkRanges } from '../server/jobs/runner';
import { shareInput } from '../server/jobs/shared-input';
import type { CheckInput } from '../server/services/jobs-input';
import type { SweepPartial } from '../lib/gmm/index';

/** Runs one task per range on the pool, threads + 1 in flight (as the embedded runner does), answers in range order. */
export async function chunksOnPool<P>(pool: JobPool, ranges: readonly (readonly [number, number])[], task: (range: readonly [number, number]) => ChunkTask): Promise<P[]> {
  const out: P[] = new Array<P>(ranges.length);
  let next = 0;
  const lane = async () => {
    while (next < ranges.length) {
      const i = next++;
      out[i] = await pool.run<P>(task(ranges[i]));
    }
  };
  await Promise.all(Array.from({ length: pool.threads + 1 }, lane));
  return out;
}

/** A subset sweep's chunks and summary on the pool, timed from sharing the input to the summary. */
export async function sweepOnPool(pool: JobPool, key: string, check: Extract<CheckInput, { kind: 'subset-sweep' }>): Promise<{ ms: number; result: unknown }> {
  const ranges = chunkRanges(check.total, 'subset-sweep');
  const t0 = performance.now();
  const input = shareInput(check.input);
  const parts = await chunksOnPool<SweepPartial>(pool, ranges, ([from, to]) => ({ op: 'subset-sweep', key, input, from: from + 1, to: to + 1 }));
  const result = await pool.run({ op: 'subset-sweep-summary', key, input, parts });
  return { ms: performance.now() - t0, result };
}

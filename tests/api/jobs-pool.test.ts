/**
 * The worker pool under vitest: worker threads load the TypeScript task module through
 * server/jobs/worker.mjs (tsx registered in the worker), a chunk computed in a worker equals the
 * same chunk computed in process (identity), a job input shared once through a SharedArrayBuffer
 * gives the same chunks as a plain one, and an AbortSignal stops a running chunk.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { API_POOL_NICE, ChunkFailedError, createJobPool, defaultThreadCount } from '../../server/jobs/pool';
import { gmmFailureMessage } from '../../shared/gmm-messages';
import { runChunk, type ChunkTask } from '../../server/jobs/tasks';
import { shareInput } from '../../server/jobs/shared-input';
import { deserialize } from 'node:v8';
import { chunkRanges } from '../../server/jobs/runner';
import { simulateEconomy, zeroCovarianceEconomy } from '../gmm/helpers';
import type { BootstrapBatch, SweepPartial } from '../../lib/gmm/index';

const pool = createJobPool({ threads: 1 });
afterAll(() => pool.destroy());

const e = simulateEconomy({ T: 240, N: 8, K: 3, seed: 4 });
const names = ['F1', 'F2', 'F3'];

describe('job pool', () => {
  it('sizes itself to the machine, at least one thread', () => {
    expect(defaultThreadCount()).toBeGreaterThanOrEqual(1);
    expect(pool.threads).toBe(1);
  });

  it('the API’s pool runs its threads below the API’s priority (nice 10); a queue worker’s pool at nice 0', async () => {
    // Linux (/proc/thread-self): the thread reports its own niceness through ping
    expect(await pool.run({ op: 'ping' })).toEqual({ pong: true, nice: API_POOL_NICE });
    expect(API_POOL_NICE).toBe(10);
    const workerPool = createJobPool({ threads: 1, nice: 0 });
    try {
      expect(await workerPool.run({ op: 'ping' })).toEqual({ pong: true, nice: 0 });
    } finally {
      await workerPool.destroy();
    }
  });

  it('runs TypeScript tasks in a worker thread with the same numbers as in process', async () => {
    const boot: ChunkTask = {
      op: 'bootstrap',
      key: 'pool-test-b',
      input: { returns: e.returns, factors: e.factors, factorNames: names, options: { stage: 'second', weighting: 'identity', lags: 2, form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 99, seed: 5 } },
      from: 10,
      to: 30,
    };
    const inWorker = await pool.run<BootstrapBatch>(boot);
    expect(inWorker).toEqual(runChunk(boot));
    expect(inWorker.J).toHaveLength(20 - inWorker.failed);
    const sweep: ChunkTask = {
      op: 'subset-sweep',
      key: 'pool-test-s',
      input: { returns: e.returns, factors: e.factors, factorNames: names, options: { lags: 2, form: 'centred', factorMeansKnown: false, weighting: 'identity' } },
      from: 1,
      to: 8,
    };
    const part = await pool.run<SweepPartial>(sweep);
    expect(part.ranges).toEqual([[1, 8]]);
    expect(part.models).toBe(7);
    expect(part).toEqual(runChunk(sweep));
  });

  it('a shared input (one SharedArrayBuffer per job) gives every chunk the numbers of the plain input, −0 and all', async () => {
    // identity: the same chunks from a plain input in process and from the shared copy in the thread
    const input = { returns: e.returns.map((r, t) => (t === 3 ? [-0, ...r.slice(1)] : r)), factors: e.factors, factorNames: names, options: { stage: 'second', weighting: 'identity', lags: 2, form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 99, seed: 5 } } as const;
    const shared = shareInput(input);
    expect(shared.shared.buffer).toBeInstanceOf(SharedArrayBuffer);
    expect(Object.is((deserialize(shared.shared) as typeof input).returns[3][0], -0)).toBe(true);
    const key = 'pool-test-shared';
    const chunks = [[0, 20], [20, 45], [45, 99]] as const;
    const inWorker = await Promise.all(chunks.map(([from, to]) => pool.run<BootstrapBatch>({ op: 'bootstrap', key, input: shared, from, to })));
    chunks.forEach(([from, to], i) => expect(inWorker[i]).toEqual(runChunk({ op: 'bootstrap', key: `${key}-plain`, input, from, to })));
    const summary = await pool.run({ op: 'bootstrap-summary', key, input: shared, batches: inWorker });
    expect(summary).toEqual(runChunk({ op: 'bootstrap-summary', key: `${key}-plain`, input, batches: inWorker }));
  });

  it('an aborted signal stops a running chunk with an AbortError and the pool keeps working', async () => {
    const ac = new AbortController();
    const long: ChunkTask = {
      op: 'bootstrap',
      key: 'pool-test-long',
      input: { returns: e.returns, factors: e.factors, factorNames: names, options: { stage: 'iterated', weighting: 'identity', lags: 2, form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 100_000, seed: 1 } },
      from: 0,
      to: 100_000,
    };
    const p = pool.run(long, ac.signal);
    setTimeout(() => ac.abort(), 300);
    await expect(p).rejects.toMatchObject({ name: 'AbortError' });
    expect(await pool.run({ op: 'ping' })).toMatchObject({ pong: true });
  });

  it('a caller mistake in a worker comes back as a rejected task with the library’s message', async () => {
    const bad: ChunkTask = {
      op: 'bootstrap',
      key: 'pool-test-bad',
      input: { returns: e.returns, factors: e.factors, factorNames: names, options: { stage: 'second', weighting: 'identity', lags: 2, form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 5, seed: 5 } },
      from: 0,
      to: 10,
    };
    await expect(pool.run(bad)).rejects.toThrow(/draws must be an integer from 19 to 100000/);
  });

  it('a typed numerical failure in a worker rejects with ChunkFailedError carrying code singular and the mapped message', async () => {
    // Cov(R, f₂) = 0 exactly (returns repeat in pairs, f₂ alternates ±0.01): X'WX is singular
    const { returns, factors } = zeroCovarianceEconomy();
    const task: ChunkTask = {
      op: 'bootstrap',
      key: 'pool-test-singular',
      input: { returns, factors, factorNames: ['M', 'Z'], options: { stage: 'second', weighting: 'identity', lags: 1, form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 99, seed: 5 } },
      from: 0,
      to: 10,
    };
    const err = await pool.run(task).then(() => null, (x: unknown) => x);
    expect(err).toBeInstanceOf(ChunkFailedError);
    if (!(err instanceof ChunkFailedError)) return;
    expect(err.failure.code).toBe('singular');
    expect(err.message).toBe(gmmFailureMessage(err.failure));
    // the pool keeps working
    expect(await pool.run({ op: 'ping' })).toMatchObject({ pong: true });
  });
});

describe('chunking', () => {
  it('covers every unit once, in order, with bounded chunk sizes', () => {
    for (const [kind, total] of [['bootstrap', 999], ['bootstrap', 40_000], ['subset-sweep', 31], ['subset-sweep', 32_767], ['rolling', 7]] as const) {
      const r = chunkRanges(total, kind);
      expect(r[0][0]).toBe(0);
      expect(r[r.length - 1][1]).toBe(total);
      for (let i = 1; i < r.length; i++) expect(r[i][0]).toBe(r[i - 1][1]);
      const sizes = r.map(([a, b]) => b - a);
      if (kind === 'bootstrap') expect(Math.max(...sizes)).toBeLessThanOrEqual(100);
    }
    expect(chunkRanges(31, 'subset-sweep')).toEqual([[0, 31]]); // a small sweep is one chunk
  });
});

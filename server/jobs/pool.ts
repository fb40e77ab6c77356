/**
 * The pool of worker threads that runs deep-check chunks (piscina), sized to the machine:
 * os.availableParallelism() − 1 threads, at least 1, so one core stays free for the API.
 *
 * Worker threads do not inherit a TypeScript loader from vitest, and `--import` in a worker's
 * execArgv is not honoured on Node 20, so the entry is a small .mjs file (worker.mjs) that
 * registers tsx's hooks and then imports tasks.ts. We pass `execArgv: []` so a parent started with
 * `node --import tsx` does not register tsx twice in each worker.
 */
import { availableParallelism } from 'node:os';
import { Piscina } from 'piscina';
import type { GmmFailure } from '../../lib/gmm/index';
import { gmmFailureMessage } from '../../shared/gmm-messages';
import type { ChunkTask } from './tasks';

/**
 * What a worker thread returns for a chunk whose check cannot be computed on these data: lib/gmm's
 * typed numerical failure (singular, not converged), the same on every try. A plain object, so it
 * crosses the thread boundary intact; {@link JobPool.run} turns it into a {@link ChunkFailedError}.
 */
export interface ChunkFailure {
  readonly chunkFailure: GmmFailure;
}

export function isChunkFailure(v: unknown): v is ChunkFailure {
  return !!v && typeof v === 'object' && 'chunkFailure' in v;
}

/** A chunk refused by lib/gmm (see {@link ChunkFailure}): fails the job at once, never retried. */
export class ChunkFailedError extends Error {
  readonly failure: GmmFailure;
  constructor(failure: GmmFailure) {
    super(gmmFailureMessage(failure));
    this.name = 'ChunkFailedError';
    this.failure = failure;
  }
}

export interface JobPool {
  /**
   * Runs one chunk in a worker; rejects with an AbortError when `signal` aborts and with a
   * {@link ChunkFailedError} when lib/gmm reports a typed failure for the chunk.
   */
  run<T>(task: ChunkTask, signal?: AbortSignal): Promise<T>;
  readonly threads: number;
  /** Chunks waiting for a thread. */
  readonly queued: number;
  destroy(): Promise<void>;
}

export function defaultThreadCount(): number {
  return Math.max(1, availableParallelism() - 1);
}

/** The embedded pool's threads run at this nice value, below the API's thread (Linux). */
export const API_POOL_NICE = 10;

/**
 * @param opts.threads worker threads (default: the machine's threads less one, at least 1)
 * @param opts.nice scheduling niceness of each thread (default API_POOL_NICE, for the API's own
 *   pool; a queue worker, with no API beside it, passes 0)
 */
export function createJobPool(opts: { threads?: number; nice?: number } = {}): JobPool {
  const threads = Math.max(1, opts.threads ?? defaultThreadCount());
  const piscina = new Piscina({
    filename: new URL('./worker.mjs', import.meta.url).href,
    minThreads: threads,
    maxThreads: threads,
    idleTimeout: 60_000,
    execArgv: [],
    env: { ...process.env, KEELSON_THREAD_NICE: String(opts.nice ?? API_POOL_NICE) },
  });
  let destroyed = false;
  return {
    threads,
    get queued() {
      return piscina.queueSize;
    },
    async run<T>(task: ChunkTask, signal?: AbortSignal): Promise<T> {
      const out: unknown = await piscina.run(task, signal ? { signal } : {});
      if (isChunkFailure(out)) throw new ChunkFailedError(out.chunkFailure);
      return out as T;
    },
    async destroy() {
      if (destroyed) return;
      destroyed = true;
      await piscina.destroy();
    },
  };
}

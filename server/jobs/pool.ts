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
import type { ChunkTask } from './tasks';

export interface JobPool {
  /** Runs one chunk in a worker; rejects with an AbortError when `signal` aborts. */
  run<T>(task: ChunkTask, signal?: AbortSignal): Promise<T>;
  readonly threads: number;
  /** Chunks waiting for a thread. */
  readonly queued: number;
  destroy(): Promise<void>;
}

export function defaultThreadCount(): number {
  return Math.max(1, availableParallelism() - 1);
}

export function createJobPool(opts: { threads?: number } = {}): JobPool {
  const threads = Math.max(1, opts.threads ?? defaultThreadCount());
  const piscina = new Piscina({
    filename: new URL('./worker.mjs', import.meta.url).href,
    minThreads: threads,
    maxThreads: threads,
    idleTimeout: 60_000,
    execArgv: [],
  });
  let destroyed = false;
  return {
    threads,
    get queued() {
      return piscina.queueSize;
    },
    run<T>(task: ChunkTask, signal?: AbortSignal): Promise<T> {
      return piscina.run(task, signal ? { signal } : {}) as Promise<T>;
    },
    async destroy() {
      if (destroyed) return;
      destroyed = true;
      await piscina.destroy();
    },
  };
}

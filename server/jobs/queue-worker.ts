/**
 * A queue worker (`npx keelson worker --redis redis://host:6379`): takes deep-check chunks and
 * summaries, and heavy runs' 'estimate' jobs (run-<id>), from the BullMQ queue and computes them with lib/gmm in the existing worker-thread pool
 * (server/jobs/pool.ts, one thread per unit of concurrency). It needs no database and no session:
 * everything it computes on is the flow's stored input in Redis (packInput's bytes, which this
 * thread hands to the pool threads without decoding: they read it once per flow).
 *
 * - Values: a chunk writes its value to the flow's hash of parts (partsKey) and returns only its
 *   range; the summary reads the hash (queue-shared.ts says why).
 * - Progress: BullMQ records each finished chunk in its parent flow; the API reads those counts.
 * - A worker killed mid-chunk stops renewing the chunk's lock; BullMQ's stalled-job check moves the
 *   chunk back to the wait list and another worker runs it again. Draws are seeded per index
 *   (lib/gmm bootstrap), so the repeat is bit-for-bit the chunk that was lost.
 * - Cancel: the API sets `keelson:cancelled:<flow>` and publishes the flow on `keelson:cancel`;
 *   every worker aborts that flow's running chunks (piscina stops the thread); a chunk taken
 *   after the mark was set is aborted as soon as the mark is read (the read runs beside the
 *   chunk's start, not before it), so the CPU is free within a second.
 * - SIGTERM (handled by the caller): close() stops taking chunks, lets running ones finish within
 *   `graceMs`, and otherwise hands them back (they stall and are retried elsewhere).
 */
import { Redis } from 'ioredis';
import { UnrecoverableError, Worker, type Job } from 'bullmq';
import { setMaxListeners } from 'node:events';
import { ChunkFailedError, createJobPool, type JobPool } from './pool';
import type { ChunkTask } from './tasks';
import { shareBytes, type SharedInput } from './shared-input';
import type { BootstrapBatch, BootstrapInput, RollingInput, RollingPoint, SubsetSweepInput, SweepPartial } from '../../lib/gmm/index';
import type { RunEstimateInput } from '../services/run-estimate';
import {
  CANCELLED_REASON,
  CANCEL_CHANNEL,
  INPUT_TTL_SECONDS,
  QUEUE_NAME,
  QUEUE_PREFIX,
  cancelKey,
  connectionFor,
  decode,
  encode,
  inputBytes,
  inputKey,
  partsKey,
  type ChunkDone,
  type ChunkJobData,
  type EstimateJobData,
  type SummaryJobData,
} from './queue-shared';

export interface QueueWorkerOptions {
  redisUrl: string;
  /** Chunks run at once (and pool threads); default: the machine's threads less one, at least 1. */
  concurrency?: number;
  /** BullMQ lock on a running chunk; a dead worker's chunk is retried after about this long (default 15 s). */
  lockMs?: number;
  /** On close, how long running chunks may take to finish before they are handed back (default 30 s). */
  graceMs?: number;
  log?: (line: string) => void;
  /** The pool that computes chunks (tests pass their own; it is not destroyed on close). Default: a new pool of `concurrency` threads. */
  pool?: JobPool;
}

export interface QueueWorker {
  readonly concurrency: number;
  /** Chunks and summaries this worker completed. */
  readonly completed: number;
  /** Resolves once connected to Redis and listening. */
  ready(): Promise<void>;
  close(): Promise<void>;
}

type Payload = ChunkJobData | SummaryJobData | EstimateJobData;

/** The shared copy of a flow's stored input, typed as what a task of that kind takes. */
type Shared = SharedInput<never>;
const as = <T>(shared: Shared) => shared as unknown as SharedInput<T>;

export function startQueueWorker(opts: QueueWorkerOptions): QueueWorker {
  const log = opts.log ?? ((l: string) => console.log(l));
  // no API shares this process: the threads run at normal priority (nice 0)
  const pool: JobPool = opts.pool ?? createJobPool({ ...(opts.concurrency ? { threads: opts.concurrency } : {}), nice: 0 });
  const concurrency = pool.threads;
  const lockMs = opts.lockMs ?? 15_000;
  const conn = connectionFor(opts.redisUrl, 'worker');
  const redis = new Redis(opts.redisUrl, { maxRetriesPerRequest: null, retryStrategy: conn.retryStrategy });
  const sub = new Redis(opts.redisUrl, { maxRetriesPerRequest: null, retryStrategy: conn.retryStrategy });
  // connection errors: BullMQ's worker reports them ('error' below); these two just reconnect
  redis.on('error', () => undefined);
  sub.on('error', () => undefined);
  /** Running chunks' abort controllers, by flow. */
  const running = new Map<string, Set<AbortController>>();
  /**
   * Inputs fetched from Redis, by flow (the last few; a summary drops its flow's): the stored bytes
   * (packInput) copied into a SharedArrayBuffer for the pool threads, once per flow, never decoded
   * on this thread.
   */
  const inputs = new Map<string, Promise<Shared>>();
  let completed = 0;

  const loadInput = (flow: string): Promise<Shared> => {
    let p = inputs.get(flow);
    if (!p) {
      p = redis.getBuffer(inputKey(flow)).then((bytes): Shared => {
        if (bytes === null) throw new UnrecoverableError(`The input of ${flow} is no longer in Redis (expired or removed); restart the job.`);
        return shareBytes<never>(inputBytes(bytes));
      });
      p.catch(() => inputs.delete(flow));
      inputs.set(flow, p);
      while (inputs.size > 4) inputs.delete(inputs.keys().next().value as string);
    }
    return p;
  };

  const abortFlow = (flow: string) => {
    for (const ac of running.get(flow) ?? []) ac.abort();
  };

  void sub.subscribe(CANCEL_CHANNEL).catch((e: unknown) => log(`[keelson worker] cancel channel: ${String(e)}`));
  sub.on('message', (_ch: string, flow: string) => abortFlow(flow));

  /**
   * Runs a task on the pool; `cancelled` (the flow's cancel mark, read while the task starts rather
   * than before it, so the read's round trip is not on every chunk's path) aborts it when true.
   */
  const runInPool = async <T>(flow: string, task: ChunkTask, cancelled: Promise<boolean>): Promise<T> => {
    const ac = new AbortController();
    setMaxListeners(0, ac.signal);
    let set = running.get(flow);
    if (!set) running.set(flow, (set = new Set()));
    set.add(ac);
    void cancelled.then((yes) => yes && ac.abort(), () => undefined);
    try {
      return await pool.run<T>(task, ac.signal);
    } catch (e) {
      if (ac.signal.aborted) throw new UnrecoverableError(CANCELLED_REASON);
      // lib/gmm's refusals (a typed failure, or GmmInputError) and an input this Node.js cannot read
      // (StoredInputError) are the same on every try: fail the
      // job at once, with the mapped message
      // (piscina keeps the name in the error's stack text; the name property may read 'Error')
      if (e instanceof ChunkFailedError) throw new UnrecoverableError(e.message);
      const err = e as { name?: string; stack?: string; message?: string } | null;
      if (/^(GmmInputError|StoredInputError)/.test(`${err?.name ?? ''}`) || /^(GmmInputError|StoredInputError)/.test(err?.stack ?? ''))
        throw new UnrecoverableError(err?.message ?? String(e));
      throw e;
    } finally {
      set.delete(ac);
      if (set.size === 0) running.delete(flow);
    }
  };

  /** A flow's chunk values in range order: from its hash of parts, or inline (chunks of an earlier release). */
  const chunkValues = async (job: Job<Payload>, flow: string): Promise<{ from: number; to: number; value: unknown }[]> => {
    const [children, parts] = await Promise.all([job.getChildrenValues<string>(), redis.hgetall(partsKey(flow))]);
    return Object.values(children)
      .map((v) => {
        const done = decode<ChunkDone | { from: number; to: number; value: unknown }>(v);
        if (!('stored' in done)) return done;
        const part = parts[String(done.from)];
        if (part === undefined) throw new UnrecoverableError(`The value of ${flow}'s chunk from ${done.from} is missing from Redis (removed or expired); restart the job.`);
        return decode<{ from: number; to: number; value: unknown }>(part);
      })
      .sort((a, b) => a.from - b.from);
  };

  const processor = async (job: Job<Payload>): Promise<string> => {
    const d = job.data;
    const cancelled = redis.exists(cancelKey(d.flow)).then((n) => n === 1);
    // a chunk of a cancelled flow whose input is already removed ends as cancelled, not as lost input
    const shared = await loadInput(d.flow).catch(async (e: unknown) => {
      throw (await cancelled.catch(() => false)) ? new UnrecoverableError(CANCELLED_REASON) : e;
    });
    if (d.kind === 'estimate') {
      // a heavy run: the whole estimation in one task (estimateRun, as the API's synchronous path)
      inputs.delete(d.flow);
      const out = await runInPool(d.flow, { op: 'estimate', task: as<RunEstimateInput>(shared) }, cancelled);
      completed++;
      return encode(out);
    }
    const key = d.flow;
    if (job.name === 'chunk') {
      const c = d as ChunkJobData;
      let out: unknown;
      if (c.kind === 'bootstrap') out = await runInPool<BootstrapBatch>(key, { op: 'bootstrap', key, input: as<BootstrapInput>(shared), from: c.from, to: c.to }, cancelled);
      else if (c.kind === 'subset-sweep') out = await runInPool<SweepPartial>(key, { op: 'subset-sweep', key, input: as<SubsetSweepInput>(shared), from: c.from + 1, to: c.to + 1 }, cancelled);
      else if (c.kind === 'rolling') out = await runInPool<RollingPoint[]>(key, { op: 'rolling', key, input: as<RollingInput>(shared), from: c.from, to: c.to }, cancelled);
      // hold-out checks are cheap (one estimate per block) and stay in the API's own pool (runner.ts)
      else throw new UnrecoverableError(`${c.kind} checks are not run by queue workers`);
      // the value goes to the flow's parts (a retried chunk writes the same bytes again), the job
      // returns its range only
      const wrote = await redis.multi().hset(partsKey(key), String(c.from), encode({ from: c.from, to: c.to, value: out })).expire(partsKey(key), INPUT_TTL_SECONDS).exec();
      // a MULTI answers each command's error in its reply: a part Redis refused (out of memory, say)
      // fails the chunk here, to be retried, instead of completing it without its value
      const refused = wrote?.find(([err]) => err)?.[0] ?? (wrote ? null : new Error('the transaction was discarded'));
      if (refused) throw new Error(`Redis did not store the value of ${key}'s chunk from ${c.from}: ${refused.message}`);
      completed++;
      return encode({ from: c.from, to: c.to, stored: true } satisfies ChunkDone);
    }
    // the summary: every chunk's value, in range order
    if (await cancelled) throw new UnrecoverableError(CANCELLED_REASON);
    const values = await chunkValues(job, key);
    let result: unknown;
    if (d.kind === 'bootstrap')
      result = await runInPool(key, { op: 'bootstrap-summary', key, input: as<BootstrapInput>(shared), batches: values.map((v) => v.value as BootstrapBatch) }, cancelled);
    else if (d.kind === 'subset-sweep')
      result = await runInPool(key, { op: 'subset-sweep-summary', key, input: as<SubsetSweepInput>(shared), parts: values.map((v) => v.value as SweepPartial) }, cancelled);
    else if (d.kind === 'rolling') result = await runInPool(key, { op: 'rolling-summary', key, input: as<RollingInput>(shared), points: values.flatMap((v) => v.value as RollingPoint[]) }, cancelled);
    else throw new UnrecoverableError(`${d.kind} checks are not run by queue workers`);
    inputs.delete(d.flow);
    completed++;
    return encode(result);
  };

  const worker = new Worker<Payload, string>(QUEUE_NAME, processor, {
    connection: conn,
    prefix: QUEUE_PREFIX,
    concurrency,
    lockDuration: lockMs,
    stalledInterval: Math.max(1000, Math.floor(lockMs / 2)),
    // a chunk may be lost to a dying worker a few times before the job is called failed
    maxStalledCount: 5,
  });
  worker.on('error', (e) => log(`[keelson worker] ${e.message}`));
  worker.on('failed', (job, e) => {
    if (job && e.message !== CANCELLED_REASON) log(`[keelson worker] ${job.id} failed: ${e.message}`);
  });

  let closing: Promise<void> | null = null;
  return {
    concurrency,
    get completed() {
      return completed;
    },
    async ready() {
      await worker.waitUntilReady();
      await redis.ping();
    },
    close() {
      closing ??= (async () => {
        const grace = opts.graceMs ?? 30_000;
        let timer: ReturnType<typeof setTimeout> | undefined;
        const graceful = worker.close();
        const late = new Promise<'late'>((r) => (timer = setTimeout(() => r('late'), grace)));
        if ((await Promise.race([graceful.then(() => 'ok' as const), late])) === 'late') {
          log('[keelson worker] chunks still running after the grace period: handing them back to the queue');
          for (const set of running.values()) for (const ac of set) ac.abort();
          await worker.close(true);
        }
        clearTimeout(timer);
        if (!opts.pool) await pool.destroy();
        sub.disconnect();
        redis.disconnect();
      })();
      return closing;
    },
  };
}

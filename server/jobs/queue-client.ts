/**
 * The API's side of queue mode: enqueue a deep check as a BullMQ flow, read its state and
 * progress, cancel it on every worker, and clean it up once its result is in SQLite.
 *
 * Every call gives up after `timeoutMs` (default 3 s) and ioredis retries a command once: a Redis
 * outage surfaces as an error the runner turns into a clear job message, instead of a request or a
 * progress poll that hangs.
 */
import { Redis } from 'ioredis';
import { FlowProducer, Job, Queue, QueueEvents } from 'bullmq';
import {
  CANCEL_CHANNEL,
  INPUT_TTL_SECONDS,
  QUEUE_NAME,
  QUEUE_PREFIX,
  cancelKey,
  chunkId,
  connectionFor,
  decode,
  inputKey,
  packInput,
  partsKey,
  type ChunkJobData,
  type EstimateJobData,
  type StoredInput,
  type StoredRunInput,
  type SummaryJobData,
  sleep,
} from './queue-shared';

export type FlowState =
  | { state: 'missing' }
  | { state: 'waiting' | 'running'; chunksDone: number; chunks: number }
  | { state: 'completed'; result: unknown }
  | { state: 'failed'; reason: string };

export class QueueClient {
  readonly url: string;
  private readonly redis: Redis;
  private readonly queue: Queue;
  private readonly flows: FlowProducer;

  private readonly timeoutMs: number;
  /** BullMQ's event stream of the queue, read from the first {@link pause} on (one blocking connection). */
  private events: QueueEvents | null = null;
  /** Followers waiting in {@link pause}, by the job id whose end wakes them. */
  private readonly waiters = new Map<string, Set<() => void>>();

  constructor(url: string, opts: { timeoutMs?: number } = {}) {
    this.url = url;
    this.timeoutMs = opts.timeoutMs ?? 3000;
    const conn = connectionFor(url, 'api');
    this.redis = new Redis(url, { maxRetriesPerRequest: 1, retryStrategy: conn.retryStrategy });
    this.redis.on('error', () => undefined); // surfaced through the calls that fail
    this.queue = new Queue(QUEUE_NAME, { connection: conn, prefix: QUEUE_PREFIX, skipWaitingForReady: true });
    this.queue.on('error', () => undefined);
    this.flows = new FlowProducer({ connection: conn, prefix: QUEUE_PREFIX });
    this.flows.on('error', () => undefined);
  }

  /** Where a redis URL points, without its password (for messages). */
  get where(): string {
    try {
      const u = new URL(this.url);
      return `${u.protocol}//${u.host}`;
    } catch {
      return 'Redis';
    }
  }

  /**
   * Stores the input once (under the flow's key, with a TTL) and adds the flow: one child per
   * range, a parent that summarises. Adding a flow that already exists leaves it as it is.
   */
  enqueue(flow: string, stored: StoredInput, ranges: readonly [number, number][], total: number): Promise<void> {
    return this.timed(this.enqueueNow(flow, stored, ranges, total), 10);
  }

  private timed<T>(p: Promise<T>, factor = 1): Promise<T> {
    let timer: ReturnType<typeof setTimeout> | undefined;
    const ms = this.timeoutMs * factor;
    const late = new Promise<never>((_, rej) => (timer = setTimeout(() => rej(new Error(`no answer within ${ms / 1000} s`)), ms)));
    p.catch(() => undefined);
    return Promise.race([p, late]).finally(() => clearTimeout(timer));
  }

  private async enqueueNow(flow: string, stored: StoredInput, ranges: readonly [number, number][], total: number): Promise<void> {
    const existing = await Job.fromId(this.queue, flow);
    await this.redis.set(inputKey(flow), packInput(stored.input), 'EX', INPUT_TTL_SECONDS);
    if (existing) return;
    const children = ranges.map(([from, to], i) => ({
      name: 'chunk',
      queueName: QUEUE_NAME,
      data: { flow, kind: stored.kind, from, to } satisfies ChunkJobData,
      opts: { jobId: chunkId(flow, i), failParentOnFailure: true, attempts: 3, backoff: { type: 'fixed' as const, delay: 500 } },
    }));
    await this.flows.add({
      name: 'summary',
      queueName: QUEUE_NAME,
      data: { flow, kind: stored.kind, total } satisfies SummaryJobData,
      opts: { jobId: flow, attempts: 3, backoff: { type: 'fixed', delay: 500 } },
      children,
    });
  }

  /**
   * A heavy run: stores its input once (with a TTL) and adds one job 'estimate' with id `id`
   * (run-<id>); adding a job that already exists leaves it as it is.
   */
  enqueueEstimate(id: string, stored: StoredRunInput): Promise<void> {
    return this.timed(this.enqueueEstimateNow(id, stored), 10);
  }

  private async enqueueEstimateNow(id: string, stored: StoredRunInput): Promise<void> {
    const existing = await Job.fromId(this.queue, id);
    await this.redis.set(inputKey(id), packInput(stored.input), 'EX', INPUT_TTL_SECONDS);
    if (existing) return;
    await this.queue.add('estimate', { flow: id, kind: 'estimate' } satisfies EstimateJobData, { jobId: id, attempts: 3, backoff: { type: 'fixed', delay: 500 } });
  }

  /** The flow's state and how many of its chunks are done (also a heavy run's job: no chunks). */
  state(flow: string): Promise<FlowState> {
    return this.timed(this.stateNow(flow));
  }

  private async stateNow(flow: string): Promise<FlowState> {
    const job = await Job.fromId<SummaryJobData, string>(this.queue, flow);
    if (!job) return { state: 'missing' };
    const s = await job.getState();
    if (s === 'completed') {
      // read the job again: it may have completed between the first read and getState()
      const fresh = await Job.fromId<SummaryJobData, string>(this.queue, flow);
      if (fresh && typeof fresh.returnvalue === 'string') return { state: 'completed', result: decode(fresh.returnvalue) };
      return { state: 'running', chunksDone: 0, chunks: 0 };
    }
    if (s === 'failed') {
      // a chunk that failed fails its parent ("child <key> failed"): report the chunk's own reason
      const child = /^child \S*?:([^:\s]+) failed$/.exec(job.failedReason ?? '');
      const reason = child ? ((await Job.fromId(this.queue, child[1]))?.failedReason ?? job.failedReason) : job.failedReason;
      return { state: 'failed', reason: reason || 'failed' };
    }
    if (s === 'unknown') return { state: 'missing' };
    const c = await job.getDependenciesCount();
    const chunksDone = c.processed ?? 0;
    const chunks = chunksDone + (c.unprocessed ?? 0) + (c.failed ?? 0) + (c.ignored ?? 0);
    return { state: s === 'active' ? 'running' : chunksDone > 0 ? 'running' : 'waiting', chunksDone, chunks };
  }

  /** Keeps the stored input alive while the API follows the flow. */
  async touch(flow: string): Promise<void> {
    await this.timed(this.redis.multi().expire(inputKey(flow), INPUT_TTL_SECONDS).expire(partsKey(flow), INPUT_TTL_SECONDS).exec());
  }

  /**
   * Cancels the flow on every worker: marks it (workers refuse its waiting chunks), publishes it
   * (workers abort its running chunks at once), and removes what is not running.
   */
  async cancel(flow: string): Promise<void> {
    await this.timed(this.redis.set(cancelKey(flow), '1', 'EX', INPUT_TTL_SECONDS));
    await this.timed(this.redis.publish(CANCEL_CHANNEL, flow));
    await this.remove(flow);
  }

  /**
   * Clears what Redis may still hold under this flow's id from another database or a reset one
   * (job ids restart at 1 there): its flow, input, chunk values and cancel mark. Called before a job's first
   * enqueue, when no flow of this database's can exist yet, so a stale cancel mark or a stale
   * finished flow is never taken for this job's.
   */
  async purge(flow: string): Promise<void> {
    await this.remove(flow);
    await this.timed(this.redis.del(cancelKey(flow)));
  }

  /** Removes the flow (parent and chunks), its input and its chunk values; a chunk still locked by a worker stays until it ends. */
  remove(flow: string): Promise<void> {
    return this.timed(this.removeNow(flow), 3);
  }

  private async removeNow(flow: string): Promise<void> {
    const job = await Job.fromId(this.queue, flow);
    if (job) {
      try {
        await job.removeUnprocessedChildren(); // the chunks no worker has taken yet
      } catch {
        // the parent has already ended
      }
      try {
        await job.remove({ removeChildren: true });
      } catch {
        // a chunk is still locked by a worker: the cancel mark makes it end; its leftovers are harmless
      }
    }
    await this.redis.del(inputKey(flow), partsKey(flow));
  }

  /**
   * A follower's pause between two reads of a job's state: resolves after `ms`, when `signal`
   * aborts, or as soon as BullMQ reports job `id` (a flow's summary, or a heavy run's job)
   * completed or failed — whichever comes first. The end is read from BullMQ's event stream of the
   * queue (QueueEvents: a blocking XREAD on a connection of its own, no polling), so a job that ends
   * is noticed within milliseconds instead of at the next poll. The event only wakes the follower:
   * the state is still read with {@link state}, and an event missed while the stream was
   * reconnecting is caught by the next poll.
   */
  pause(id: string, ms: number, signal: AbortSignal): Promise<void> {
    this.events ??= this.openEvents();
    const stop = new AbortController();
    const wake = () => stop.abort();
    let set = this.waiters.get(id);
    if (!set) this.waiters.set(id, (set = new Set()));
    set.add(wake);
    signal.addEventListener('abort', wake, { once: true });
    return sleep(ms, stop.signal).finally(() => {
      signal.removeEventListener('abort', wake);
      set.delete(wake);
      if (set.size === 0 && this.waiters.get(id) === set) this.waiters.delete(id);
    });
  }

  private openEvents(): QueueEvents {
    const ev = new QueueEvents(QUEUE_NAME, { connection: { ...connectionFor(this.url, 'api'), maxRetriesPerRequest: null }, prefix: QUEUE_PREFIX });
    ev.on('error', () => undefined); // it reconnects by itself; the followers' polls go on meanwhile
    const ended = ({ jobId }: { jobId: string }) => {
      for (const wake of this.waiters.get(jobId) ?? []) wake();
    };
    ev.on('completed', ended);
    ev.on('failed', ended);
    return ev;
  }

  async ping(): Promise<void> {
    await this.timed(this.redis.ping());
  }

  async close(): Promise<void> {
    await Promise.allSettled([this.flows.close(), this.queue.close(), ...(this.events ? [this.events.close()] : [])]);
    this.redis.disconnect();
  }
}

/**
 * Heavy runs off the request thread. POST /runs (and the basis / first-stage copies) store a run
 * whose cost T·N²·K is above KEELSON_HEAVY_RUN_COST as `queued` and hand it here; this estimates it
 * with the same pure function the synchronous path calls (estimateRun, as chunk task 'estimate'):
 *
 * - embedded mode: in the deep-check worker-thread pool of this process (JobRunner.runTask);
 * - queue mode: as one BullMQ job 'estimate' with id run-<id>, its input stored once in Redis;
 *   this process follows the job and writes the outcome.
 *
 * queued → running (when this process picks it up) → finished / failed, the end written in one
 * transaction with its audit line and the run's bootstrap job (services/runs.ts completeQueuedRun).
 * A process that stops leaves the run queued or running; `relaunch()` at boot starts it again
 * (queue mode: follows the job still in Redis, or enqueues it again — the estimation is
 * deterministic, so the numbers are the same). `cancel()` (after services/runs.ts cancelRun wrote
 * the run cancelled) aborts the pool task, or cancels the job on every worker in queue mode.
 */
import { setMaxListeners } from 'node:events';
import type { Db } from '../db/client';
import type { Mailer } from '../services/mailer';
import { completeQueuedRun, markRunRunning, openRunIds, queuedRunTask, setRunNotice, type PreparedRunTask, type RunLauncher } from '../services/runs';
import type { RunEstimate } from '../services/run-estimate';
import type { JobRunner } from './runner';
import type { QueueClient } from './queue-client';
import { CANCELLED_REASON, runJobId } from './queue-shared';

export interface RunEstimatorOptions {
  db: Db;
  mailer: Mailer;
  /** The deep-check runner: its pool (embedded) or queue client (queue mode), and the bootstrap jobs. */
  jobs: JobRunner;
  publicUrl?: string;
  mailAfterMs?: number;
  /** Queue mode: how often the job's state is read (default 200 ms). */
  pollMs?: number;
}

/** The abort reason when this process stops (the run stays open for the next boot). */
const SHUTDOWN = 'keelson-shutdown';
/** The abort reason when the run was cancelled (already written as such: nothing more is written). */
const CANCEL = 'keelson-run-cancelled';

export class RunEstimator implements RunLauncher {
  private readonly opts: RunEstimatorOptions;
  private readonly active = new Map<number, { ac: AbortController; done: Promise<void> }>();
  private closed = false;

  constructor(opts: RunEstimatorOptions) {
    this.opts = opts;
  }

  /**
   * Starts estimating a queued run in the background, from the next turn of the event loop (the
   * request that queued it is answered first). `prepared`: the input the request already built
   * from the frozen spec and the edition; without it (boot) it is built again from the run's row.
   */
  start(runId: number, prepared?: PreparedRunTask): void {
    if (this.closed || this.active.has(runId)) return;
    const ac = new AbortController();
    setMaxListeners(0, ac.signal);
    const done = new Promise<void>((resolve) => setImmediate(resolve))
      .then(() => this.execute(runId, ac.signal, prepared))
      .catch((e: unknown) => console.error('[keelson] run estimator error', runId, e))
      .finally(() => this.active.delete(runId));
    this.active.set(runId, { ac, done });
  }

  /** Boot: starts again every run a stopped process left queued or running. @returns how many. */
  relaunch(): number {
    const ids = openRunIds(this.opts.db);
    for (const id of ids) this.start(id);
    return ids.length;
  }

  /** Whether this process is estimating the run. */
  isActive(runId: number): boolean {
    return this.active.has(runId);
  }

  /** Resolves when the run (if this process estimates it) has been written or given up. */
  async waitFor(runId: number): Promise<void> {
    await this.active.get(runId)?.done;
  }

  /**
   * Stops a cancelled run's estimation: the local task or follow loop ends without writing, and in
   * queue mode the job is cancelled on every worker (marked, published, removed) even when this
   * process was not following it.
   */
  cancel(runId: number): void {
    this.active.get(runId)?.ac.abort(CANCEL);
    const q = this.opts.jobs.queue;
    if (q) void q.cancel(runJobId(runId)).catch((e: unknown) => console.error('[keelson] could not cancel the queued run on the workers', runId, e));
  }

  /** Stops: running estimations are abandoned, the runs stay queued/running for `relaunch()`. */
  async close(): Promise<void> {
    this.closed = true;
    for (const { ac } of this.active.values()) ac.abort(SHUTDOWN);
    await Promise.allSettled([...this.active.values()].map((a) => a.done));
  }

  private async execute(runId: number, signal: AbortSignal, given?: PreparedRunTask): Promise<void> {
    const { db } = this.opts;
    if (signal.aborted) return; // cancelled or shut down before it began
    const mark = markRunRunning(db, runId);
    if (!mark) return;
    let prepared: PreparedRunTask;
    try {
      prepared = given ?? queuedRunTask(db, runId);
    } catch (e) {
      this.complete(runId, { ok: false, error: messageOf(e) }, null);
      return;
    }
    let out: RunEstimate | { ok: false; error: string } | null;
    try {
      const q = this.opts.jobs.queue;
      out = q ? await this.follow(q, runId, prepared.value, mark === 'started', signal) : await this.opts.jobs.runTask<RunEstimate>({ op: 'estimate', task: prepared.value }, signal);
    } catch (e) {
      if (signal.aborted) return; // shutting down (the next boot starts the run again) or cancelled
      out = { ok: false, error: `The estimation stopped: ${messageOf(e)}` };
    }
    if (out === null || signal.aborted) return;
    this.complete(runId, out, prepared.bootstrap);
  }

  private complete(runId: number, out: RunEstimate | { ok: false; error: string }, bootstrap: ReturnType<typeof queuedRunTask>['bootstrap']): void {
    const { db, mailer, publicUrl, mailAfterMs, jobs } = this.opts;
    completeQueuedRun({ db, mailer, publicUrl, mailAfterMs, runner: jobs }, runId, out, bootstrap);
  }

  /**
   * Queue mode: enqueues the run's job (unless Redis has it) and follows it to its end. A Redis
   * outage is written as the run's passing message (status stays running) and cleared when Redis
   * answers; a job Redis lost is enqueued again. A run started for the first time (`fresh`) first
   * clears what Redis may hold under its job id from another or a reset database (job ids restart
   * there), so a stale cancel mark or finished job is never taken for this run's.
   * @returns null when this process stops following.
   */
  private async follow(q: QueueClient, runId: number, task: ReturnType<typeof queuedRunTask>['value'], fresh: boolean, signal: AbortSignal): Promise<RunEstimate | { ok: false; error: string } | null> {
    const { db } = this.opts;
    const id = runJobId(runId);
    const pollMs = this.opts.pollMs ?? 200;
    let enqueued = false;
    let outage = false;
    let requeues = 0;
    while (!signal.aborted) {
      try {
        if (fresh) {
          await q.purge(id);
          fresh = false;
        }
        if (!enqueued) {
          await q.enqueueEstimate(id, { kind: 'estimate', input: task });
          enqueued = true;
        }
        const st = await q.state(id);
        if (outage) {
          outage = false;
          setRunNotice(db, runId, null);
        }
        if (st.state === 'completed') {
          await q.remove(id).catch(() => undefined);
          return st.result as RunEstimate;
        }
        if (st.state === 'failed') {
          await q.remove(id).catch(() => undefined);
          return { ok: false, error: st.reason === CANCELLED_REASON ? 'The estimation was cancelled on the worker.' : `The worker could not estimate the run: ${st.reason}` };
        }
        if (st.state === 'missing') {
          if (++requeues > 5) return { ok: false, error: `The queue at ${q.where} lost this run's job five times; start the run again.` };
          enqueued = false;
          continue;
        }
      } catch (e) {
        if (!outage) {
          outage = true;
          setRunNotice(db, runId, `The queue at ${q.where} does not answer (${messageOf(e)}) since ${new Date().toISOString()}; the run waits and resumes when it is back.`);
        }
      }
      await q.pause(id, pollMs, signal); // or at once when the run's job ends
    }
    return null;
  }
}

function messageOf(e: unknown): string {
  if (e && typeof e === 'object' && 'message' in e && typeof (e as { message: unknown }).message === 'string') return (e as { message: string }).message;
  return String(e);
}

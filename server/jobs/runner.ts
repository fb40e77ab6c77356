/**
 * Runs deep-check jobs: splits each into chunks, hands them to the worker pool, records progress
 * after every chunk, and writes the result together with the final status in one transaction.
 *
 * Cancel: an AbortController per job; aborting rejects the chunks still queued or running
 * (piscina stops the worker of a running chunk) and no further chunk is sent. A job whose
 * process dies is left 'running' in the table; boot marks it 'interrupted' (markInterruptedJobs).
 *
 * Queue mode (`redisUrl`, from KEELSON_REDIS_URL): the same chunks go to BullMQ workers as one flow
 * per job attempt (queue-client.ts, queue-worker.ts). This process follows the flow — progress
 * from its finished chunks, the result from its summary — and writes both to SQLite as in the
 * embedded mode. Stopping the API does not stop the flow: at boot `reattach()` follows the jobs
 * still running instead of marking them interrupted.
 */
import { setMaxListeners } from 'node:events';
import { and, eq, inArray } from 'drizzle-orm';
import type { Db } from '../db/client';
import { inTransaction } from '../db/client';
import { jobs, runs, users } from '../db/schema/index';
import type { Mailer } from '../services/mailer';
import { mailInBackground } from '../services/runs';
import { buildCheckInput, type CheckInput } from '../services/jobs-input';
import { JOB_KIND_LABELS, type JobMode } from '../../shared/jobs';
import { createJobPool, type JobPool } from './pool';
import type { ChunkTask, HoldoutBlocks } from './tasks';
import { shareInput } from './shared-input';
import { QueueClient } from './queue-client';
import { CANCELLED_REASON, flowId } from './queue-shared';
import { runResultColumns } from '../services/run-shape';
import { withBootstrap, type BootstrapBatch, type BootstrapResult, type LedgerResult, type RollingPoint, type SweepPartial } from '../../lib/gmm/index';

export interface JobRunnerOptions {
  db: Db;
  mailer: Mailer;
  publicUrl?: string;
  /** A pool to use; when absent one is created on the first job (sized to the machine). */
  pool?: JobPool;
  /** Mail the author when a job took longer than this (default one minute). */
  mailAfterMs?: number;
  /** Queue mode: chunks go to BullMQ workers over this Redis instead of the in-process pool. */
  redisUrl?: string;
  /** Queue mode: how often the flow's state is read for progress (default 250 ms); its end wakes the follower at once (QueueClient.pause). */
  pollMs?: number;
}

/** The abort reason when this process stops following a job that goes on in the queue. */
const SHUTDOWN = 'keelson-shutdown';

/**
 * How a job is cut into chunks: small enough that progress moves and a cancel bites within a
 * fraction of a second, and that another job's chunks never wait long behind this one's; large
 * enough that sending the data to a worker stays cheap. Bootstrap: 10–100 draws per chunk;
 * sweep: at most 200 chunks by mask range, at least SWEEP_MIN_CHUNK subsets each (a sweep of up to
 * 17 candidates is one chunk; 20 candidates give 8 chunks, 25 give 200 chunks of 167,773
 * subsets), each answered as a bounded partial
 * that merges exactly (lib/gmm sweepChunk / mergeSweepPartials); rolling: ~20 chunks.
 */
export function chunkRanges(total: number, kind: CheckInput['kind']): [number, number][] {
  const even = Math.ceil(total / (kind === 'rolling' || kind === 'holdout' ? 20 : 40));
  const size = Math.max(1, kind === 'bootstrap' ? Math.min(100, Math.max(10, even)) : kind === 'subset-sweep' ? Math.max(SWEEP_MIN_CHUNK, Math.ceil(total / SWEEP_CHUNKS)) : even);
  const out: [number, number][] = [];
  for (let a = 0; a < total; a += size) out.push([a, Math.min(total, a + size)]);
  return out;
}

/** How many mask ranges a big subset sweep is cut into (both modes). */
export const SWEEP_CHUNKS = 200;

/**
 * The fewest subsets in a sweep chunk (about 80 ms of work at 0.6 µs a subset). Smaller chunks
 * spend more on the queue than on the sweep: in three pairs of runs of bench/queue-timeline.ts
 * (20 candidates, warm workers), 64 chunks of 16,384 took 1.03 s on one worker and 0.77 s on two,
 * 16 of 65,536 0.80–1.10 s and 0.50–0.64 s, 8 of 131,072 0.69–0.80 s and 0.45–0.49 s.
 */
export const SWEEP_MIN_CHUNK = 131_072;

const nowIso = () => new Date().toISOString();

/** Maps `items` through async `fn` with at most `limit` calls pending; stops at the first rejection. */
async function mapLimited<T, R>(items: readonly T[], limit: number, fn: (item: T) => Promise<R>): Promise<R[]> {
  const out = new Array<R>(items.length);
  let next = 0;
  let failed = false;
  const lane = async () => {
    while (!failed && next < items.length) {
      const i = next++;
      try {
        out[i] = await fn(items[i]);
      } catch (e) {
        failed = true;
        throw e;
      }
    }
  };
  await Promise.all(Array.from({ length: Math.max(1, Math.min(limit, items.length)) }, lane));
  return out;
}

export class JobRunner {
  private readonly db: Db;
  private readonly mailer: Mailer;
  private readonly publicUrl?: string;
  /** Mail a job's author when the job took at least this long; run mails use the same threshold. */
  readonly mailAfterMs: number;
  private pool: JobPool | null;
  private readonly ownsPool: boolean;
  private readonly active = new Map<number, AbortController>();
  private readonly settled = new Map<number, Promise<void>>();
  private closed = false;
  /** Queue mode's client (null: embedded pool). */
  readonly queue: QueueClient | null;
  /** 'queue' with KEELSON_REDIS_URL, else 'embedded': decides the per-mode limits (shared/jobs.ts JOB_LIMITS). */
  readonly mode: JobMode;
  private readonly pollMs: number;

  constructor(opts: JobRunnerOptions) {
    this.db = opts.db;
    this.mailer = opts.mailer;
    this.publicUrl = opts.publicUrl;
    this.mailAfterMs = opts.mailAfterMs ?? 60_000;
    this.pool = opts.pool ?? null;
    this.ownsPool = !opts.pool;
    this.queue = opts.redisUrl ? new QueueClient(opts.redisUrl) : null;
    this.mode = this.queue ? 'queue' : 'embedded';
    this.pollMs = opts.pollMs ?? 250;
  }

  private getPool(): JobPool {
    if (!this.pool) this.pool = createJobPool();
    return this.pool;
  }

  /** Runs one task in this process's worker pool (created on first use): heavy runs' 'estimate'. */
  runTask<T>(task: ChunkTask, signal?: AbortSignal): Promise<T> {
    return this.getPool().run<T>(task, signal);
  }

  /** Starts a queued job in the background. */
  start(jobId: number): void {
    this.launch(jobId, false);
  }

  /**
   * Boot-time recovery. Embedded mode: jobs left running or queued are marked interrupted, as
   * before. Queue mode: their flows live on in Redis, so this process follows them again (a job
   * whose flow Redis lost is enqueued again: draws are seeded per index, the result is the same).
   * @returns how many jobs were re-attached (queue mode) or marked interrupted (embedded).
   */
  reattach(): number {
    if (!this.queue) return markInterruptedJobs(this.db);
    const open = this.db.select({ id: jobs.id, status: jobs.status }).from(jobs).where(inArray(jobs.status, ['running', 'queued'])).all();
    for (const j of open) this.launch(j.id, j.status === 'running');
    return open.length;
  }

  private launch(jobId: number, resume: boolean): void {
    if (this.closed || this.active.has(jobId)) return;
    const ac = new AbortController();
    setMaxListeners(0, ac.signal); // every chunk of the job listens to the one signal
    this.active.set(jobId, ac);
    const p = this.execute(jobId, ac, resume)
      .catch((e: unknown) => console.error('[keelson] job runner error', jobId, e))
      .finally(() => {
        this.active.delete(jobId);
        this.settled.delete(jobId);
      });
    this.settled.set(jobId, p);
  }

  /** Whether this process is running the job. */
  isActive(jobId: number): boolean {
    return this.active.has(jobId);
  }

  /**
   * Aborts a running job's chunks; the job is marked cancelled by its own loop. In queue mode a
   * job followed by another API process is cancelled on the workers from here too.
   */
  abort(jobId: number): boolean {
    const ac = this.active.get(jobId);
    if (ac) {
      ac.abort();
      return true;
    }
    if (!this.queue) return false;
    const row = this.db.select({ attempts: jobs.attempts }).from(jobs).where(eq(jobs.id, jobId)).get();
    if (!row) return false;
    const flow = flowId(jobId, row.attempts);
    this.queue.cancel(flow).catch((e: unknown) => console.error(`[keelson] could not cancel ${flow} in the queue: ${messageOf(e)}`));
    return true;
  }

  /** Resolves when the job (if this process runs it) has stopped. */
  async waitFor(jobId: number): Promise<void> {
    await this.settled.get(jobId);
  }

  /**
   * Stops. Embedded mode: the running jobs are aborted (boot marks them interrupted). Queue mode:
   * this process only stops following them; their flows go on and the next boot re-attaches.
   */
  async close(): Promise<void> {
    this.closed = true;
    for (const ac of this.active.values()) ac.abort(this.queue ? SHUTDOWN : undefined);
    await Promise.allSettled([...this.settled.values()]);
    if (this.ownsPool && this.pool) await this.pool.destroy();
    if (this.queue) await this.queue.close();
  }

  private async execute(jobId: number, ac: AbortController, resume = false): Promise<void> {
    const signal = ac.signal;
    const db = this.db;
    const job = db.select().from(jobs).where(eq(jobs.id, jobId)).get();
    if (!job || job.status !== (resume ? 'running' : 'queued')) return;
    const started = resume && job.startedAt ? Date.parse(job.startedAt) : Date.now();
    if (!resume)
      db.update(jobs)
        .set({ status: 'running', startedAt: nowIso(), finishedAt: null, done: 0, error: null, result: null })
        .where(and(eq(jobs.id, jobId), eq(jobs.status, 'queued')))
        .run();
    let check: CheckInput;
    try {
      const runRow = db.select({ id: runs.id, editionId: runs.editionId, spec: runs.spec }).from(runs).where(eq(runs.id, job.runId)).get();
      if (!runRow) throw new Error(`Run ${job.runId} no longer exists.`);
      // the mode's limits again: a job restarted after the server left queue mode fails with the reason
      check = buildCheckInput(db, runRow, job.kind, JSON.parse(job.params), this.mode);
    } catch (e) {
      this.finish(jobId, 'failed', null, messageOf(e), started);
      return;
    }
    db.update(jobs).set({ total: check.total }).where(eq(jobs.id, jobId)).run();
    const key = `job:${jobId}:${job.attempts}`;
    const ranges = chunkRanges(check.total, check.kind);
    // hold-out checks (one estimate per block) stay in this process's pool in queue mode too
    if (this.queue && check.kind !== 'holdout') return this.followFlow(this.queue, jobId, flowId(jobId, job.attempts), check, ranges, signal, started, !resume);
    let done = 0;
    const pool = this.getPool();
    // At most threads + 1 chunks in flight per job: jobs started later interleave with a long
    // one instead of queueing behind all its chunks.
    const limit = pool.threads + 1;
    const record = (n: number) => {
      done += n;
      db.update(jobs).set({ done }).where(and(eq(jobs.id, jobId), eq(jobs.status, 'running'))).run();
    };
    try {
      let result: unknown;
      if (check.kind === 'bootstrap') {
        const input = shareInput(check.input);
        const batches = await mapLimited(ranges, limit, async ([from, to]) => {
          const b = await pool.run<BootstrapBatch>({ op: 'bootstrap', key, input, from, to }, signal);
          record(to - from);
          return b;
        });
        result = await pool.run({ op: 'bootstrap-summary', key, input, batches } satisfies ChunkTask, signal);
      } else if (check.kind === 'subset-sweep') {
        const input = shareInput(check.input);
        const parts = await mapLimited(ranges, limit, async ([from, to]) => {
          const r = await pool.run<SweepPartial>({ op: 'subset-sweep', key, input, from: from + 1, to: to + 1 }, signal);
          record(to - from);
          return r;
        });
        result = await pool.run({ op: 'subset-sweep-summary', key, input, parts } satisfies ChunkTask, signal);
      } else if (check.kind === 'holdout' && check.mode === 'split') {
        result = await pool.run({ op: 'holdout-split', key, input: check.input } satisfies ChunkTask, signal);
        record(1);
      } else if (check.kind === 'holdout') {
        const input = shareInput(check.input);
        const parts = await mapLimited(ranges, limit, async ([from, to]) => {
          const r = await pool.run<HoldoutBlocks>({ op: 'holdout-rolling', key, input, from, to }, signal);
          record(to - from);
          return r;
        });
        result = await pool.run({ op: 'holdout-rolling-summary', key, input, parts } satisfies ChunkTask, signal);
      } else {
        const input = shareInput(check.input);
        const parts = await mapLimited(ranges, limit, async ([from, to]) => {
          const r = await pool.run<RollingPoint[]>({ op: 'rolling', key, input, from, to }, signal);
          record(to - from);
          return r;
        });
        result = await pool.run({ op: 'rolling-summary', key, input, points: parts.flat() } satisfies ChunkTask, signal);
      }
      if (signal.aborted) throw abortError();
      this.finish(jobId, 'finished', result, null, started);
    } catch (e) {
      if (signal.aborted || isAbort(e)) this.finish(jobId, 'cancelled', null, null, started);
      else {
        ac.abort(); // stop the job's other chunks
        this.finish(jobId, 'failed', null, messageOf(e), started);
      }
    }
  }

  /**
   * Queue mode: enqueues the job's flow (unless it is already in Redis) and follows it until its
   * summary is done, writing progress to SQLite as chunks finish and the result at the end.
   * A Redis outage is written to the job's message (status stays running, progress stays where
   * it was) and cleared when Redis answers again; a flow that Redis lost meanwhile is enqueued again.
   */
  private async followFlow(
    q: QueueClient,
    jobId: number,
    flow: string,
    check: CheckInput,
    ranges: [number, number][],
    signal: AbortSignal,
    started: number,
    /** The job was queued in SQLite, so nothing of this database's is in Redis yet under `flow`. */
    fresh = false,
  ): Promise<void> {
    const db = this.db;
    const chunkSize = ranges.length > 0 ? ranges[0][1] - ranges[0][0] : 1;
    let enqueued = false;
    let outage = false;
    let requeues = 0;
    let lastTouch = Date.now();
    let done = -1;
    while (!signal.aborted) {
      try {
        if (!enqueued) {
          if (fresh) await q.purge(flow);
          await q.enqueue(flow, check, ranges, check.total);
          enqueued = true;
        }
        const st = await q.state(flow);
        if (outage) {
          outage = false;
          db.update(jobs).set({ error: null }).where(and(eq(jobs.id, jobId), eq(jobs.status, 'running'))).run();
        }
        if (st.state === 'completed') {
          this.finish(jobId, 'finished', st.result, null, started);
          await q.remove(flow).catch(() => undefined);
          return;
        }
        if (st.state === 'failed') {
          if (st.reason === CANCELLED_REASON) this.finish(jobId, 'cancelled', null, null, started);
          else this.finish(jobId, 'failed', null, st.reason, started);
          await q.remove(flow).catch(() => undefined);
          return;
        }
        if (st.state === 'missing') {
          if (++requeues > 5) {
            this.finish(jobId, 'failed', null, `The queue at ${q.where} lost this job's chunks five times; restart the job.`, started);
            return;
          }
          enqueued = false;
          continue;
        }
        const now = Math.min(check.total, st.chunksDone * chunkSize);
        if (now > done) {
          done = now;
          db.update(jobs).set({ done }).where(and(eq(jobs.id, jobId), eq(jobs.status, 'running'))).run();
        }
        if (Date.now() - lastTouch > 3600_000) {
          lastTouch = Date.now();
          await q.touch(flow);
        }
      } catch (e) {
        if (!outage) {
          outage = true;
          const msg = `The queue at ${q.where} does not answer (${messageOf(e)}) since ${nowIso()}; the job waits and resumes when it is back.`;
          db.update(jobs).set({ error: msg }).where(and(eq(jobs.id, jobId), eq(jobs.status, 'running'))).run();
        }
      }
      // the next read at the poll, or at once when the flow's summary ends
      await q.pause(flow, this.pollMs, signal);
    }
    if (signal.reason === SHUTDOWN) return; // the flow goes on; the next boot re-attaches
    try {
      await q.cancel(flow);
    } catch (e) {
      console.error(`[keelson] could not cancel ${flow} in the queue: ${messageOf(e)}`);
    }
    this.finish(jobId, 'cancelled', null, null, started);
  }

  /**
   * Final status, result and finish time in one transaction; mails the author after a long job.
   * A finished bootstrap that is its run's own (runs.bootstrap_job_id) is merged into the run's
   * ledger (withBootstrap) in the same transaction; if the merge is refused the job is failed
   * with the reason and the ledger stays as it was. Failed or cancelled jobs leave it untouched.
   */
  private finish(jobId: number, status: 'finished' | 'failed' | 'cancelled', result: unknown, error: string | null, started: number): void {
    const db = this.db;
    const row = inTransaction(db, (tx) => {
      const cur = tx.select().from(jobs).where(eq(jobs.id, jobId)).get();
      // a cancel request may already have set 'cancelled'; never overwrite another final state
      if (!cur || !['running', 'queued', 'cancelled'].includes(cur.status)) return null;
      if (cur.status === 'cancelled' && status !== 'cancelled') status = 'cancelled';
      if (status === 'finished' && cur.kind === 'bootstrap') {
        const merged = mergeIntoRun(tx, cur.runId, jobId, result as BootstrapResult);
        if (!merged.ok) {
          status = 'failed';
          error = merged.error;
        }
      }
      const set = {
        status,
        finishedAt: nowIso(),
        error,
        result: status === 'finished' ? JSON.stringify(result) : null,
        ...(status === 'finished' ? { done: cur.total } : {}),
      };
      tx.update(jobs).set(set).where(eq(jobs.id, jobId)).run();
      return { ...cur, ...set };
    });
    if (!row || status === 'cancelled') return;
    const took = Date.now() - started;
    if (took < this.mailAfterMs) return;
    const author = db.select({ email: users.email }).from(users).where(eq(users.id, row.authorId)).get();
    if (!author) return;
    const label = JOB_KIND_LABELS[row.kind];
    const link = this.publicUrl ? `\n${this.publicUrl.replace(/\/$/, '')}/runs/${row.runId}\n` : '';
    mailInBackground(db, this.mailer, {
      to: author.email,
      subject: status === 'finished' ? `${label} on run #${row.runId} finished` : `${label} on run #${row.runId} failed`,
      text:
        status === 'finished'
          ? `Your ${label.toLowerCase()} (job #${jobId}) on run #${row.runId} finished after ${Math.round(took / 1000)} s.${link}\n` +
            'Results are statistical evidence about a model on past data, not investment advice.\n'
          : `Your ${label.toLowerCase()} (job #${jobId}) on run #${row.runId} failed: ${error ?? 'unknown error'}${link}`,
    });
  }
}

/**
 * Writes withBootstrap(ledger, bootstrap) as the result of the run whose own bootstrap job this
 * is, once (a ledger that already carries bootstrap p-values is left alone). Jobs started by hand
 * on a run (POST /runs/:id/checks) do not touch its ledger.
 */
function mergeIntoRun(tx: Db, runId: number, jobId: number, boot: BootstrapResult): { ok: true } | { ok: false; error: string } {
  const run = tx.select({ id: runs.id, result: runs.result, bootstrapJobId: runs.bootstrapJobId }).from(runs).where(eq(runs.id, runId)).get();
  if (!run || run.bootstrapJobId !== jobId || !run.result) return { ok: true };
  const ledger = JSON.parse(run.result) as LedgerResult;
  if (ledger.bootstrap) return { ok: true };
  let merged: LedgerResult;
  try {
    merged = withBootstrap(ledger, boot);
  } catch (e) {
    return { ok: false, error: `The bootstrap could not be added to run #${runId}'s ledger: ${messageOf(e)}` };
  }
  tx.update(runs).set(runResultColumns(merged)).where(and(eq(runs.id, runId), eq(runs.bootstrapJobId, jobId))).run();
  return { ok: true };
}

function abortError(): Error {
  const e = new Error('The job was cancelled');
  e.name = 'AbortError';
  return e;
}

function isAbort(e: unknown): boolean {
  return !!e && typeof e === 'object' && ((e as { name?: string }).name === 'AbortError' || /abort/i.test(String((e as { message?: string }).message)));
}

function messageOf(e: unknown): string {
  if (e && typeof e === 'object' && 'message' in e && typeof (e as { message: unknown }).message === 'string') return (e as { message: string }).message;
  return String(e);
}

/**
 * Boot-time recovery: jobs left 'running' or 'queued' by a stopped process are marked
 * 'interrupted' (their partial progress is kept for the record, no result is shown).
 * @returns how many jobs were marked.
 */
export function markInterruptedJobs(db: Db): number {
  return inTransaction(db, (tx) =>
    tx
      .update(jobs)
      .set({ status: 'interrupted', error: 'The server stopped while this job ran; restart it to run it again.', finishedAt: nowIso(), result: null })
      .where(inArray(jobs.status, ['running', 'queued']))
      .run().changes,
  );
}

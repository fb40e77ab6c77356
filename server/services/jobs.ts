/**
 * Deep-check jobs: create on a finished run, read, list, cancel, restart.
 *
 * Access (server-enforced, deny by default; routes name the roles):
 * - start, cancel, restart: researchers and admins; a researcher only on runs they can read, and
 *   cancel/restart only their own jobs (admins any).
 * - read: anyone who can read the job's run (its library edition). Listing: admins see all jobs;
 *   researchers their own; reviewers and desk users the jobs of runs they can read.
 */
import { and, count, desc, eq, getTableColumns, inArray, lt, or, type SQL } from 'drizzle-orm';
import { randomInt } from 'node:crypto';
import type { Db } from '../db/client';
import { inTransaction } from '../db/client';
import { jobs, libraries, runs, users } from '../db/schema/index';
import { KeelsonApiError } from '../../shared/errors';
import type { User } from '../../shared/auth';
import {
  RESTARTABLE_JOB_STATUSES,
  bootstrapParamsSchema,
  type Job,
  type JobListQuery,
  type JobResult,
  type JobsResponse,
  type StartCheck,
  jobLimitsFor,
  type JobLimits,
} from '../../shared/jobs';
import { audit } from './audit';
import { nameOf } from './users';
import { canReadEdition } from './specs';
import { libraryAccessSql } from './runs';
import { assertBootstrapAccepted, buildCheckInput } from './jobs-input';
import type { JobRunner } from '../jobs/runner';

type JobRow = typeof jobs.$inferSelect;
/** Every job column but the (large) result: what lists read. */
const { result: _resultColumn, ...listColumns } = getTableColumns(jobs);
void _resultColumn;

function etaSeconds(row: JobRow, now = Date.now()): number | null {
  if (row.status !== 'running' || !row.startedAt || row.done <= 0 || row.total <= 0) return null;
  const elapsed = (now - Date.parse(row.startedAt)) / 1000;
  if (!(elapsed >= 0)) return null;
  return Math.max(0, (elapsed / row.done) * (row.total - row.done));
}

export function toJob(row: JobRow, authorName: string, withResult: boolean): Job {
  // The stored result is the runner's lib/gmm result for this row's kind (JSON); the pairing of
  // kind and result shape is checked where it is read (jobSchema, shared/jobs.ts) and by
  // tests/api/deep-check-schemas.test.ts.
  const job = {
    id: row.id,
    kind: row.kind,
    runId: row.runId,
    authorId: row.authorId,
    authorName,
    params: JSON.parse(row.params) as Record<string, unknown>,
    status: row.status,
    done: row.done,
    total: row.total,
    attempts: row.attempts,
    createdAt: row.createdAt,
    startedAt: row.startedAt,
    finishedAt: row.finishedAt,
    etaSeconds: etaSeconds(row),
    error: row.error,
    result: withResult && row.status === 'finished' && row.result ? (JSON.parse(row.result) as JobResult) : null,
  };
  return job as Job;
}

function runOf(db: Db, user: User, runId: number) {
  const run = db.select({ id: runs.id, editionId: runs.editionId, spec: runs.spec, status: runs.status }).from(runs).where(eq(runs.id, runId)).get();
  if (!run || !canReadEdition(db, user, run.editionId)) throw new KeelsonApiError('not_found', `No run ${runId}`);
  return run;
}


/** The job row if `user` may read it (may read its run); else 404. */
export function findJobRow(db: Db, user: User, id: number): JobRow {
  const row = db.select().from(jobs).where(eq(jobs.id, id)).get();
  if (!row) throw new KeelsonApiError('not_found', `No job ${id}`);
  if (user.role === 'admin' || row.authorId === user.id) return row;
  const run = db.select({ editionId: runs.editionId }).from(runs).where(eq(runs.id, row.runId)).get();
  if (!run || !canReadEdition(db, user, run.editionId)) throw new KeelsonApiError('not_found', `No job ${id}`);
  return row;
}

export function getJob(db: Db, user: User, id: number): Job {
  const row = findJobRow(db, user, id);
  return toJob(row, nameOf(db, row.authorId), true);
}

/**
 * A page of the jobs `user` may see, newest first, without their results (read one job for its
 * result). Access and paging run in SQL: admins see every job; researchers without a run filter
 * their own; others the jobs they started or whose run's library they may read (libraryAccessSql).
 */
export function listJobs(db: Db, user: User, q: JobListQuery): JobsResponse {
  const conds: SQL[] = [];
  if (q.runId) {
    runOf(db, user, q.runId); // 404 unless the run is readable
    conds.push(eq(jobs.runId, q.runId));
  } else if (user.role === 'researcher') conds.push(eq(jobs.authorId, user.id));
  else if (user.role !== 'admin') conds.push(or(eq(jobs.authorId, user.id), libraryAccessSql(user)) as SQL);
  if (q.status) conds.push(eq(jobs.status, q.status));
  const where = conds.length ? and(...conds) : undefined;
  const limit = q.limit ?? 200;
  const rows = db
    .select({ j: listColumns, authorName: users.name })
    .from(jobs)
    .innerJoin(users, eq(users.id, jobs.authorId))
    .leftJoin(runs, eq(runs.id, jobs.runId))
    .leftJoin(libraries, eq(libraries.id, runs.libraryId))
    .where(q.before ? and(where, lt(jobs.id, q.before)) : where)
    .orderBy(desc(jobs.id))
    .limit(limit + 1)
    .all();
  const page = rows.slice(0, limit);
  const total =
    db.select({ n: count() }).from(jobs).leftJoin(runs, eq(runs.id, jobs.runId)).leftJoin(libraries, eq(libraries.id, runs.libraryId)).where(where).get()?.n ?? 0;
  return {
    jobs: page.map((x) => toJob({ ...x.j, result: null }, x.authorName, false)),
    total,
    nextCursor: rows.length > limit ? page[page.length - 1].j.id : null,
  };
}

function assertMayChange(user: User, row: JobRow): void {
  if (user.role !== 'admin' && row.authorId !== user.id)
    throw new KeelsonApiError('forbidden', `Job ${row.id} was started by someone else; only its author or an admin may change it`);
}

/**
 * Starts a deep check on a finished run. Validates the parameters against the run's data first
 * (422, nothing written), then inserts the job (queued) with an audit line and hands it to the runner.
 */
export function startCheck(db: Db, runner: JobRunner, user: User, runId: number, body: StartCheck): Job {
  const run = runOf(db, user, runId);
  if (run.status !== 'finished') throw new KeelsonApiError('conflict', `Run ${runId} is ${run.status}; deep checks need a finished run`);
  let params: Record<string, unknown> = { ...body.params };
  if (body.kind === 'bootstrap') {
    const p = bootstrapParamsSchema.parse(body.params);
    params = { ...p, seed: p.seed ?? randomInt(0, 2 ** 31) };
  }
  const check = buildCheckInput(db, run, body.kind, params, runner.mode);
  if (check.kind === 'bootstrap') assertBootstrapAccepted(check);
  const row = inTransaction(db, (tx) => {
    const r = tx
      .insert(jobs)
      .values({ kind: body.kind, runId, authorId: user.id, params: JSON.stringify(params), status: 'queued', done: 0, total: check.total, attempts: 1 })
      .returning()
      .get();
    audit(tx, user.id, 'job.started', { jobId: r.id, runId, kind: body.kind });
    return r;
  });
  runner.start(row.id);
  return toJob(row, user.name, false);
}

/** Cancels a queued or running job (409 for a job that has ended). */
export function cancelJob(db: Db, runner: JobRunner, user: User, id: number): Job {
  const row = findJobRow(db, user, id);
  assertMayChange(user, row);
  if (row.status !== 'queued' && row.status !== 'running')
    throw new KeelsonApiError('conflict', `Job ${id} is ${row.status}; only a queued or running job can be cancelled`);
  const updated = inTransaction(db, (tx) => {
    const r = tx
      .update(jobs)
      .set({ status: 'cancelled', finishedAt: new Date().toISOString(), result: null })
      .where(and(eq(jobs.id, id), inArray(jobs.status, ['queued', 'running'])))
      .returning()
      .get();
    if (r) audit(tx, user.id, 'job.cancelled', { jobId: id });
    return r;
  });
  runner.abort(id);
  const now = updated ?? db.select().from(jobs).where(eq(jobs.id, id)).get()!;
  return toJob(now, nameOf(db, now.authorId), true);
}

/** Runs an interrupted, failed or cancelled job again from the start with the same parameters. */
export function restartJob(db: Db, runner: JobRunner, user: User, id: number): Job {
  const row = findJobRow(db, user, id);
  assertMayChange(user, row);
  if (!RESTARTABLE_JOB_STATUSES.includes(row.status))
    throw new KeelsonApiError('conflict', `Job ${id} is ${row.status}; only interrupted, failed or cancelled jobs can be restarted`);
  if (runner.isActive(id)) throw new KeelsonApiError('conflict', `Job ${id} is still stopping; try again in a moment`);
  const updated = inTransaction(db, (tx) => {
    const r = tx
      .update(jobs)
      .set({ status: 'queued', done: 0, error: null, result: null, startedAt: null, finishedAt: null, attempts: row.attempts + 1 })
      .where(and(eq(jobs.id, id), inArray(jobs.status, [...RESTARTABLE_JOB_STATUSES])))
      .returning()
      .get();
    if (!r) throw new KeelsonApiError('conflict', `Job ${id} changed meanwhile; reload it`);
    audit(tx, user.id, 'job.restarted', { jobId: id, attempt: r.attempts });
    return r;
  });
  runner.start(id);
  return toJob(updated, nameOf(db, updated.authorId), false);
}

/** This server's deep-check limits (its mode's, shared/jobs.ts JOB_LIMITS); every signed-in role may read them. */
export function jobLimits(runner: JobRunner): JobLimits {
  return jobLimitsFor(runner.mode);
}

/**
 * Runs: one estimation of a model spec on one library edition, synchronously in the request
 * (a demo-size run takes milliseconds).
 *
 * What is refused and how:
 * - the request itself is invalid (shape: 400 `validation_failed`; the spec does not fit the
 *   edition — unknown series, wrong kind, N < K, T ≤ N + K, a lag ≥ T/4, a bootstrap lib/gmm
 *   does not accept: 422 `unprocessable`): nothing is written.
 * - the data refuse the model (missing values in the window, a constant or collinear series,
 *   a singular system): the run is stored as `failed` with the reason in words, and the API
 *   answers 201 with status "failed" and `error`.
 *
 * The frozen spec records the resolved basis of the verdict (shared/specs.ts `resolveBasis`).
 * When the spec asks for bootstrap p-values, the run starts a bootstrap deep check in the same
 * transaction (runs.bootstrap_job_id); the run is finished as soon as its ledger is, and the job
 * runner writes `withBootstrap(ledger, bootstrap)` as the run's result, once, in the transaction
 * that marks the job finished. That is the only change a finished run ever sees: there is no
 * route that changes a run, and a new basis is a new run (`changeRunBasis`, `firstStageCopy`).
 *
 * The author is mailed when the run ends only if it took at least `mailAfterMs` (one minute by
 * default, as for deep checks).
 */
import { and, count, desc, eq, getTableColumns, inArray, lt, or, sql, type SQL } from 'drizzle-orm';
import type { Db } from '../db/client';
import { inTransaction } from '../db/client';
import { jobs, libraries, runs, signoffRequests, signoffs, users } from '../db/schema/index';
import { KeelsonApiError } from '../../shared/errors';
import type { User } from '../../shared/auth';
import { modelSpecSchema, resolveBasis, specBootstrapSchema, type ModelSpec, type SavedSpec } from '../../shared/specs';
import type { ChangeBasisBody, FirstStageCopyResponse, LedgerResult, Run, RunListQuery, RunsResponse, RunStatus, RunSummary, SignoffState } from '../../shared/runs';
import type { LedgerResult as EngineResult } from '../../lib/gmm/index';
import { loadEditionData, type EditionData } from './edition-data';
import { bootstrapSettingsOf, buildLedgerInput, RunDataError } from './ledger-input';
import { estimateRun, runCost, type RunEstimate, type RunEstimateInput } from './run-estimate';
import { findSpecRow, insertSpec, loadAndCheck, specForRun } from './specs';
import { bootstrapCheckInput } from './jobs-input';
import { audit } from './audit';
import { sendMailInBackground } from './mail';
import type { Mailer } from './mailer';
import type { JobRunner } from '../jobs/runner';
import { KEELSON_VERSION } from '../version';
import { preparedFor } from '../db/prepared';
import { canReadLibrary } from './edition-data';
import { runResultColumns } from './run-shape';
import { keptLast } from '../kept-last';

type RunRow = typeof runs.$inferSelect;
/** A run row without its (large) result text: what summaries and lists read. */
type SummaryRow = Omit<RunRow, 'result'>;
const { result: _resultColumn, ...summaryColumns } = getTableColumns(runs);
void _resultColumn;

const inflightMail = new Set<Promise<void>>();
/** Sends in the background (a failure never undoes the action) and remembers the send until it ends. */
export function mailInBackground(db: Db, mailer: Mailer, msg: { to: string; subject: string; text: string }): void {
  const p = sendMailInBackground(db, mailer, msg).finally(() => inflightMail.delete(p));
  inflightMail.add(p);
}
/** Resolves when every background mail of runs and review has been handed over (tests, shutdown). */
export async function mailSettled(): Promise<void> {
  while (inflightMail.size > 0) await Promise.all([...inflightMail]);
}

export { buildLedgerInput, RunDataError } from './ledger-input';

/**
 * Runs the estimator (estimateRun, the function heavy runs run on a worker too); data refusals come
 * back as `{ ok: false, error }`, request mistakes throw a 422, anything else propagates.
 */
export function estimate(spec: ModelSpec, data: EditionData, dropSetOverride?: string[]): { ok: true; result: EngineResult } | { ok: false; error: string } {
  let built: ReturnType<typeof buildLedgerInput>;
  try {
    built = buildLedgerInput(spec, data, dropSetOverride);
  } catch (e) {
    if (e instanceof RunDataError) return { ok: false, error: e.message };
    throw e;
  }
  const out = estimateRun({ input: built.input, dates: built.dates });
  if (!out.ok && out.kind === 'request') throw new KeelsonApiError('unprocessable', out.error);
  return out.ok ? { ok: true, result: out.result } : { ok: false, error: out.error };
}

// ---- reading ----

function parseResult(row: RunRow): LedgerResult | null {
  return row.result ? (JSON.parse(row.result) as LedgerResult) : null;
}

function toSummary(row: SummaryRow, authorName: string, signoff: SignoffState): RunSummary {
  const spec = JSON.parse(row.spec) as ModelSpec;
  return {
    id: row.id,
    status: row.status,
    specId: row.specId,
    specName: row.specName,
    editionId: row.editionId,
    libraryId: row.libraryId,
    libraryName: row.libraryName,
    editionNumber: row.editionNumber,
    authorId: row.authorId,
    authorName,
    keelsonVersion: row.keelsonVersion,
    error: row.error,
    createdAt: row.createdAt,
    startedAt: row.startedAt,
    finishedAt: row.finishedAt,
    signoff,
    N: row.nAssets,
    K: row.nFactors,
    T: row.nPeriods,
    factors: spec.factors,
    bootstrapJobId: row.bootstrapJobId ?? null,
  };
}

function toRun(row: RunRow, authorName: string, signoff: SignoffState): Run {
  return { ...toSummary(row, authorName, signoff), spec: modelSpecSchema.parse(JSON.parse(row.spec)), result: parseResult(row) };
}

/** A run with its library's access fields (runs.library_id is the edition's library) and its sign-off state. */
const runWithAccess = preparedFor((db) =>
  db
    .select({ r: runs, visibility: libraries.visibility, ownerId: libraries.ownerId, signoff: signoffStateSql, authorName: users.name })
    .from(runs)
    .innerJoin(libraries, eq(libraries.id, runs.libraryId))
    .innerJoin(users, eq(users.id, runs.authorId))
    .where(eq(runs.id, sql.placeholder('id')))
    .prepare(),
);

/** The run row with its author's name and sign-off state, if it exists and `user` may read its library; else 404. */
function readableRun(db: Db, user: User, id: number): { r: RunRow; signoff: SignoffState; authorName: string } {
  const hit = Number.isInteger(id) ? runWithAccess(db).get({ id }) : undefined;
  if (!hit || !canReadLibrary(user, { id: hit.r.libraryId, visibility: hit.visibility, ownerId: hit.ownerId })) throw new KeelsonApiError('not_found', `No run ${id}`);
  return hit;
}

/** The run row, if it exists and `user` may read its library; else 404. */
export function findRunRow(db: Db, user: User, id: number): RunRow {
  return readableRun(db, user, id).r;
}


export function getRun(db: Db, user: User, id: number): Run {
  const { r, authorName, signoff } = readableRun(db, user, id);
  return toRun(r, authorName, signoff);
}

/**
 * getRun's answer `{ run }` as JSON text, with the stored result spliced in as stored: a finished
 * run's (large) ledger is parsed once for the summary and never re-serialised.
 */
export function getRunJson(db: Db, user: User, id: number): string {
  const { r: row, authorName, signoff } = readableRun(db, user, id);
  const summary = JSON.stringify(toSummary(row, authorName, signoff));
  return `{"run":${summary.slice(0, -1)},"spec":${specJsonOf(row.spec)},"result":${row.result ?? 'null'}}}`;
}

/** Stored spec texts already read through the schema, with their answer JSON (the last 256). */
const specJsons = new Map<string, string>();

/** The spec as a run's answer carries it: the stored text read through the schema (defaults filled), cached by that text. */
function specJsonOf(stored: string): string {
  return keptLast(specJsons, stored, () => JSON.stringify(modelSpecSchema.parse(JSON.parse(stored))), 256);
}

/** The stored result text exactly as estimated (404 for a run without a result). */
export function getRunResultText(db: Db, user: User, id: number): string {
  const row = findRunRow(db, user, id);
  if (!row.result) throw new KeelsonApiError('conflict', `Run ${id} is ${row.status}; it has no result${row.error ? `: ${row.error}` : ''}`);
  return row.result;
}

/**
 * Which libraries' runs `user` may read, as SQL on `libraries` (the same rule as canReadLibrary in
 * edition-data.ts: admins all, shared libraries for everyone, private ones for their researcher
 * owner); undefined for no restriction.
 */
export function libraryAccessSql(user: User): SQL | undefined {
  if (user.role === 'admin') return undefined;
  if (user.role === 'researcher') return or(eq(libraries.visibility, 'shared'), eq(libraries.ownerId, user.id));
  return eq(libraries.visibility, 'shared');
}

/**
 * The sign-off state of `runs.id`, in SQL (the one rule for single reads, lists and the list
 * filter): 'requested' while a request is unanswered, else the last decision, else 'none'.
 */
const signoffStateSql = sql<SignoffState>`(CASE WHEN EXISTS (SELECT 1 FROM ${signoffRequests} WHERE ${signoffRequests.runId} = ${runs.id} AND ${signoffRequests.answeredAt} IS NULL) THEN 'requested' ELSE coalesce((SELECT ${signoffs.decision} FROM ${signoffs} WHERE ${signoffs.runId} = ${runs.id} ORDER BY ${signoffs.id} DESC LIMIT 1), 'none') END)`;

/**
 * A page of the runs `user` may read, newest first. Access, every filter (sign-off state and N, K, T
 * included) and the paging run in SQL on columns; no result JSON is read.
 */
export function listRuns(db: Db, user: User, q: RunListQuery): RunsResponse {
  const conds: SQL[] = [];
  const access = libraryAccessSql(user);
  if (access) conds.push(access);
  if (q.specId) conds.push(eq(runs.specId, q.specId));
  if (q.libraryId) conds.push(eq(runs.libraryId, q.libraryId));
  if (q.editionId) conds.push(eq(runs.editionId, q.editionId));
  if (q.status) conds.push(eq(runs.status, q.status));
  if (q.authorId) conds.push(eq(runs.authorId, q.authorId));
  if (q.N) conds.push(eq(runs.nAssets, q.N));
  if (q.K) conds.push(eq(runs.nFactors, q.K));
  if (q.T) conds.push(eq(runs.nPeriods, q.T));
  if (q.signoff) conds.push(sql`${signoffStateSql} = ${q.signoff}`);
  const where = conds.length ? and(...conds) : undefined;
  const limit = q.limit ?? 200;
  const rows = db
    .select({ r: summaryColumns, authorName: users.name, signoff: signoffStateSql })
    .from(runs)
    .innerJoin(users, eq(users.id, runs.authorId))
    .innerJoin(libraries, eq(libraries.id, runs.libraryId))
    .where(q.before ? and(where, lt(runs.id, q.before)) : where)
    .orderBy(desc(runs.id))
    .limit(limit + 1)
    .all();
  const page = rows.slice(0, limit);
  const total = db.select({ n: count() }).from(runs).innerJoin(libraries, eq(libraries.id, runs.libraryId)).where(where).get()?.n ?? 0;
  return {
    runs: page.map((x) => toSummary(x.r, x.authorName, x.signoff)),
    total,
    nextCursor: rows.length > limit ? page[page.length - 1].r.id : null,
  };
}

export function runSummariesByIds(db: Db, ids: number[]): Map<number, RunSummary> {
  if (ids.length === 0) return new Map();
  const rows = db
    .select({ r: summaryColumns, authorName: users.name, signoff: signoffStateSql })
    .from(runs)
    .innerJoin(users, eq(users.id, runs.authorId))
    .where(inArray(runs.id, ids))
    .all();
  return new Map(rows.map((x) => [x.r.id, toSummary(x.r, x.authorName, x.signoff)]));
}

// ---- creating ----

/** Starts a queued (heavy) run in the background: the embedded pool or the queue (server/jobs/run-estimator.ts). */
/** A queued run's estimation input as the request built it (so the launcher need not build it again). */
export type PreparedRunTask = { value: RunEstimateInput; cost: number; bootstrap: RunBootstrap };

export interface RunLauncher {
  start(runId: number, prepared?: PreparedRunTask): void;
  /** Stops the run's estimation wherever it runs (pool task, or the BullMQ job on every worker). */
  cancel(runId: number): void;
}

/** What creating a run needs besides the database. */
export interface RunDeps {
  db: Db;
  mailer: Mailer;
  /** Starts the bootstrap deep check of a spec that asks for bootstrap p-values. */
  runner: JobRunner;
  publicUrl?: string;
  /** Mail the author only when the run took at least this long (default one minute, as for checks). */
  mailAfterMs?: number;
  /** Milliseconds clock used to measure how long the estimation took (tests inject a fake one). */
  clock?: () => number;
  /**
   * Runs whose cost T·N²·K (runCost) is above this are queued (202) and estimated by `launcher`;
   * at or below it, or without a launcher, they are estimated in the request (201).
   */
  heavyRunCost?: number;
  launcher?: RunLauncher;
}

export const RUN_MAIL_AFTER_MS = 60_000;
/** Default KEELSON_HEAVY_RUN_COST: ten times the largest demo run (T = 600, N = 25, K = 5 costs 1.9·10⁶). */
export const DEFAULT_HEAVY_RUN_COST = 20_000_000;

export interface CreateRunArgs {
  specId?: number;
  editionId?: number;
  spec?: ModelSpec;
  name?: string;
}

/** The bootstrap job a run starts once its ledger finished. */
type RunBootstrap = { params: Record<string, unknown>; total: number } | null;

/** A run checked against its edition with its estimation input built; not yet estimated nor written. */
interface CheckedRun {
  spec: ModelSpec;
  data: EditionData;
  /** The estimation input, or the data's refusal (missing values in the window): the run fails at once. */
  task: { ok: true; value: RunEstimateInput; cost: number; bootstrap: RunBootstrap } | { ok: false; error: string };
}

/** A run's outcome as stored: the ledger, or why the data refused the model. */
type StoredOutcome = { ok: true; result: EngineResult } | { ok: false; error: string };

/** An estimated run, not yet written. */
interface EstimatedRun {
  outcome: StoredOutcome;
  startedAt: string;
  finishedAt: string;
  tookMs: number;
}

/** The spec as frozen into a run: the basis resolved (standard / robust / bootstrap) and spelled out. */
export function freezeSpec(spec: ModelSpec): ModelSpec {
  const parsed = modelSpecSchema.safeParse({ ...spec, basis: resolveBasis(spec) });
  if (!parsed.success) {
    const issues = parsed.error.issues.map((i) => ({ path: ['spec', ...i.path.map((x) => (typeof x === 'symbol' ? String(x) : x))], message: i.message }));
    throw new KeelsonApiError('unprocessable', issues[0].message, issues);
  }
  return parsed.data;
}

/**
 * The estimation input of a frozen spec on its edition (the same for a run estimated in the
 * request and one estimated by a worker): lib/gmm's ledger input, and the bootstrap it must accept
 * when the spec asks for bootstrap p-values. Throws RunDataError when the data refuse the model,
 * 422 when the bootstrap settings do not fit the data (block length above T/2).
 */
export function runTaskOf(spec: ModelSpec, data: EditionData): { value: RunEstimateInput; cost: number; bootstrap: RunBootstrap } {
  const built = buildLedgerInput(spec, data);
  let bootstrap: RunBootstrap = null;
  let bootstrapInput: RunEstimateInput['bootstrap'];
  if (spec.bootstrap) {
    const params: Record<string, unknown> = { ...bootstrapSettingsOf(spec.bootstrap) };
    const check = bootstrapCheckInput(spec, built.input, params);
    bootstrap = { params, total: check.total };
    bootstrapInput = check.input;
  }
  const value: RunEstimateInput = { input: built.input, dates: built.dates, ...(bootstrapInput ? { bootstrap: bootstrapInput } : {}) };
  return { value, cost: runCost(built.input), bootstrap };
}

/** Checks the spec against the edition and builds its input. Throws 4xx (nothing written yet) for a request mistake. */
function checkRun(deps: RunDeps, user: User, rawSpec: ModelSpec, editionId: number): CheckedRun {
  const spec = freezeSpec(rawSpec);
  const { data } = loadAndCheck(deps.db, user, editionId, spec);
  try {
    return { spec, data, task: { ok: true, ...runTaskOf(spec, data) } };
  } catch (e) {
    if (e instanceof RunDataError) return { spec, data, task: { ok: false, error: e.message } };
    throw e;
  }
}

/** Whether the run goes to the background (a launcher exists and its cost is above the threshold). */
function isHeavy(deps: RunDeps, c: CheckedRun): boolean {
  return !!deps.launcher && c.task.ok && c.task.cost > (deps.heavyRunCost ?? DEFAULT_HEAVY_RUN_COST);
}

/**
 * A request mistake that lib/gmm found (its option checks, or a bootstrap it refuses) as the 422
 * the synchronous path answers.
 */
function requestError(out: Extract<RunEstimate, { ok: false }>): KeelsonApiError {
  return out.from === 'bootstrap' ? new KeelsonApiError('unprocessable', out.error, [{ path: ['params'], message: out.error }]) : new KeelsonApiError('unprocessable', out.error);
}

/** Estimates in the request. Throws 422 (nothing written) when lib/gmm finds the request wrong. */
function estimateNow(deps: RunDeps, c: CheckedRun): EstimatedRun {
  const clock = deps.clock ?? Date.now;
  const t0 = clock();
  const startedAt = new Date().toISOString();
  let outcome: StoredOutcome;
  if (!c.task.ok) outcome = c.task;
  else {
    const out = estimateRun(c.task.value);
    if (!out.ok && out.kind === 'request') throw requestError(out);
    outcome = out.ok ? { ok: true, result: out.result } : { ok: false, error: out.error };
  }
  const finishedAt = new Date().toISOString();
  return { outcome, startedAt, finishedAt, tookMs: clock() - t0 };
}

/** Inserts the bootstrap job of a run whose ledger finished (inside the caller's transaction). */
function insertBootstrapJob(tx: Db, userId: number, runId: number, boot: NonNullable<RunBootstrap>): { row: RunRow; jobId: number } {
  const job = tx
    .insert(jobs)
    .values({ kind: 'bootstrap', runId, authorId: userId, params: JSON.stringify(boot.params), status: 'queued', done: 0, total: boot.total, attempts: 1 })
    .returning()
    .get();
  const row = tx.update(runs).set({ bootstrapJobId: job.id }).where(eq(runs.id, runId)).returning().get();
  audit(tx, userId, 'job.started', { jobId: job.id, runId, kind: 'bootstrap', withRun: true });
  return { row, jobId: job.id };
}

/**
 * Writes a run inside the caller's transaction: estimated (finished or failed, with its bootstrap
 * job when the ledger finished and the spec asks for one), or `est` null: queued for a worker.
 */
function insertRun(
  tx: Db,
  user: User,
  c: CheckedRun,
  est: EstimatedRun | null,
  ref: { specId: number | null; specName: string | null; basedOnRunId?: number },
): { row: RunRow; jobId: number | null } {
  const status: RunStatus = est === null ? 'queued' : est.outcome.ok ? 'finished' : 'failed';
  let row = tx
    .insert(runs)
    .values({
      specId: ref.specId,
      specName: ref.specName,
      editionId: c.data.editionId,
      libraryId: c.data.libraryId,
      libraryName: c.data.libraryName,
      editionNumber: c.data.number,
      spec: JSON.stringify(c.spec),
      keelsonVersion: KEELSON_VERSION,
      authorId: user.id,
      status,
      error: est && !est.outcome.ok ? est.outcome.error : null,
      ...runResultColumns(est?.outcome.ok ? est.outcome.result : null),
      startedAt: est?.startedAt ?? null,
      finishedAt: est?.finishedAt ?? null,
    })
    .returning()
    .get();
  audit(tx, user.id, `run.${status}`, {
    runId: row.id,
    specId: ref.specId,
    editionId: c.data.editionId,
    basis: c.spec.basis,
    ...(ref.basedOnRunId !== undefined ? { basedOnRunId: ref.basedOnRunId } : {}),
    ...(est === null && c.task.ok ? { cost: c.task.cost } : {}),
  });
  let jobId: number | null = null;
  if (est?.outcome.ok && c.task.ok && c.task.bootstrap) ({ row, jobId } = insertBootstrapJob(tx, user.id, row.id, c.task.bootstrap));
  return { row, jobId };
}

/** Mails the author that a run ended, if it took at least the mail threshold. */
function mailRunEnd(
  deps: Pick<RunDeps, 'db' | 'mailer' | 'publicUrl' | 'mailAfterMs'>,
  to: string,
  row: Pick<RunRow, 'id' | 'specName' | 'libraryName' | 'editionNumber'>,
  outcome: StoredOutcome,
  tookMs: number,
): void {
  if (tookMs < (deps.mailAfterMs ?? RUN_MAIL_AFTER_MS)) return;
  const link = deps.publicUrl ? `\n${deps.publicUrl.replace(/\/$/, '')}/runs/${row.id}\n` : '';
  const title = row.specName ? `“${row.specName}”` : `on ${row.libraryName} edition ${row.editionNumber}`;
  const took = `after ${Math.round(tookMs / 1000)} s`;
  mailInBackground(deps.db, deps.mailer, {
    to,
    subject: outcome.ok ? `Run #${row.id} finished` : `Run #${row.id} failed`,
    text: outcome.ok
      ? `Your run #${row.id} ${title} finished ${took}: N = ${outcome.result.N} test assets, K = ${outcome.result.K} factors, T = ${outcome.result.T} periods.\n` +
        `J = ${outcome.result.J.stat.toFixed(2)} (df ${outcome.result.J.df}, p = ${outcome.result.J.p.toFixed(3)}).${link}\n` +
        'Results are statistical evidence about a model on past data, not investment advice.\n'
      : `Your run #${row.id} ${title} failed ${took}: ${outcome.error}${link}`,
  });
}

/** After the write: start the bootstrap job (or the queued run), and mail the author if the run took long enough. */
function afterInsert(deps: RunDeps, user: User, c: CheckedRun, est: EstimatedRun | null, row: RunRow, jobId: number | null): void {
  if (est === null) {
    deps.launcher?.start(row.id, c.task.ok ? c.task : undefined);
    return;
  }
  if (jobId !== null) deps.runner.start(jobId);
  mailRunEnd(deps, user.email, row, est.outcome, est.tookMs);
}

/**
 * Checks a run, then either estimates it here (cost at or below the heavy-run threshold) or leaves
 * it for the launcher (null).
 */
function estimateUnlessHeavy(deps: RunDeps, c: CheckedRun): EstimatedRun | null {
  return isHeavy(deps, c) ? null : estimateNow(deps, c);
}

/**
 * Creates a run. A small run is estimated here and stored (finished or failed) in one transaction
 * with its audit line (and its bootstrap job when the spec asks for one), then the author is mailed
 * after a long run. A heavy run (cost above `heavyRunCost`) is stored as `queued` with its audit
 * line and handed to the launcher; the caller answers 202. Throws 4xx (nothing written) when the
 * request is invalid; 409 for an archived saved spec.
 */
export function createRun(deps: RunDeps, user: User, args: CreateRunArgs): Run {
  let spec: ModelSpec;
  let specId: number | null = null;
  let specName: string | null = args.name ?? null;
  let editionId: number;
  if (args.specId !== undefined) {
    const saved = specForRun(deps.db, user, args.specId);
    spec = saved.spec;
    specId = saved.row.id;
    specName = saved.row.name;
    editionId = args.editionId ?? saved.row.editionId;
  } else {
    if (!args.spec || args.editionId === undefined) throw new KeelsonApiError('validation_failed', 'Give editionId and spec, or specId');
    spec = args.spec;
    editionId = args.editionId;
  }
  const c = checkRun(deps, user, spec, editionId);
  const est = estimateUnlessHeavy(deps, c);
  const { row, jobId } = inTransaction(deps.db, (tx) => insertRun(tx, user, c, est, { specId, specName }));
  afterInsert(deps, user, c, est, row, jobId);
  return toRun(row, user.name, 'none');
}

// ---- finishing a queued run (called by server/jobs/run-estimator.ts) ----

/** A queued run's estimation input, rebuilt from its frozen spec and its edition (editions never change). */
export function queuedRunTask(db: Db, runId: number): { value: RunEstimateInput; cost: number; bootstrap: RunBootstrap } {
  const row = db.select({ spec: runs.spec, editionId: runs.editionId }).from(runs).where(eq(runs.id, runId)).get();
  if (!row) throw new Error(`Run ${runId} no longer exists.`);
  return runTaskOf(modelSpecSchema.parse(JSON.parse(row.spec)), loadEditionData(db, row.editionId));
}

/**
 * Marks a queued run running. @returns 'started' (it was queued), 'resumed' (already running: a run
 * re-launched at boot keeps its start) or null when it is neither (finished, failed or cancelled).
 */
export function markRunRunning(db: Db, runId: number): 'started' | 'resumed' | null {
  return inTransaction(db, (tx) => {
    const row = tx.select({ status: runs.status }).from(runs).where(eq(runs.id, runId)).get();
    if (!row || (row.status !== 'queued' && row.status !== 'running')) return null;
    if (row.status === 'running') return 'resumed';
    tx.update(runs).set({ status: 'running', startedAt: new Date().toISOString(), error: null }).where(eq(runs.id, runId)).run();
    return 'started';
  });
}

/** A running run's passing message (a queue outage), or null to clear it; the run stays running. */
export function setRunNotice(db: Db, runId: number, notice: string | null): void {
  db.update(runs).set({ error: notice }).where(and(eq(runs.id, runId), eq(runs.status, 'running'))).run();
}

/**
 * Writes a queued run's outcome in one transaction: status finished (with the ledger, and its
 * bootstrap job when the spec asks for one) or failed (with the reason; a request mistake lib/gmm
 * found is a failure too, since the request was answered long ago), its audit line, and the end
 * time. Then starts the bootstrap job and mails the author after a long run.
 * @returns the written row, or null when the run was no longer queued or running.
 */
export function completeQueuedRun(
  deps: Pick<RunDeps, 'db' | 'mailer' | 'publicUrl' | 'mailAfterMs' | 'runner'>,
  runId: number,
  out: RunEstimate | { ok: false; error: string },
  bootstrap: RunBootstrap,
): RunRow | null {
  const outcome: StoredOutcome = out.ok ? { ok: true, result: out.result } : { ok: false, error: out.error };
  const finishedAt = new Date().toISOString();
  const written = inTransaction(deps.db, (tx) => {
    const cur = tx.select().from(runs).where(eq(runs.id, runId)).get();
    if (!cur || (cur.status !== 'queued' && cur.status !== 'running')) return null;
    const status: RunStatus = outcome.ok ? 'finished' : 'failed';
    let row = tx
      .update(runs)
      .set({
        status,
        ...runResultColumns(outcome.ok ? outcome.result : null),
        error: outcome.ok ? null : outcome.error,
        startedAt: cur.startedAt ?? finishedAt,
        finishedAt,
      })
      .where(eq(runs.id, runId))
      .returning()
      .get();
    const spec = JSON.parse(cur.spec) as ModelSpec;
    audit(tx, cur.authorId, `run.${status}`, { runId, specId: cur.specId, editionId: cur.editionId, basis: spec.basis, queued: true });
    let jobId: number | null = null;
    if (outcome.ok && bootstrap) ({ row, jobId } = insertBootstrapJob(tx, cur.authorId, runId, bootstrap));
    return { row, jobId };
  });
  if (!written) return null;
  const { row, jobId } = written;
  if (jobId !== null) deps.runner.start(jobId);
  const author = deps.db.select({ email: users.email }).from(users).where(eq(users.id, row.authorId)).get();
  const took = Date.parse(row.finishedAt ?? finishedAt) - Date.parse(row.startedAt ?? finishedAt);
  if (author) mailRunEnd(deps, author.email, row, outcome, took);
  return row;
}

/** Runs left queued or running (by a stopped process): the launcher starts them again at boot. */
export function openRunIds(db: Db): number[] {
  return db
    .select({ id: runs.id })
    .from(runs)
    .where(inArray(runs.status, ['queued', 'running']))
    .orderBy(runs.id)
    .all()
    .map((r) => r.id);
}

/** The run row for a change that makes a new run from it: readable, and the caller's own (or an admin). */
function ownRunRow(db: Db, user: User, id: number, doing: string): RunRow {
  const row = findRunRow(db, user, id);
  if (user.role !== 'admin' && row.authorId !== user.id)
    throw new KeelsonApiError('forbidden', `Run ${id} was started by someone else; only its author or an admin may ${doing}`);
  return row;
}

/**
 * Cancels a queued or running (heavy) run: status `cancelled`, who cancelled it as its message, the
 * end time (when) and an audit line, in one transaction; then the launcher stops its estimation (the pool task,
 * or the BullMQ job on every worker). A run has no result before it ends, so nothing computed is
 * lost; an estimate that arrives afterwards is not written (completeQueuedRun only ends open runs).
 * @throws 403 unless the author or an admin; 409 unless the run is queued or running.
 */
export function cancelRun(deps: Pick<RunDeps, 'db' | 'launcher'>, user: User, id: number): Run {
  const { db } = deps;
  const row = ownRunRow(db, user, id, 'cancel it');
  const refuse = (status: string) => new KeelsonApiError('conflict', `Run ${id} is ${status}; only a queued or running run can be cancelled`);
  if (row.status !== 'queued' && row.status !== 'running') throw refuse(row.status);
  const now = new Date().toISOString();
  const updated = inTransaction(db, (tx) => {
    const r = tx
      .update(runs)
      .set({ status: 'cancelled', error: `Cancelled by ${user.name}.`, finishedAt: now })
      .where(and(eq(runs.id, id), inArray(runs.status, ['queued', 'running'])))
      .returning({ id: runs.id })
      .get();
    if (r) audit(tx, user.id, 'run.cancelled', { runId: id, was: row.status });
    return r;
  });
  if (!updated) throw refuse(findRunRow(db, user, id).status); // it ended between the read and the write
  deps.launcher?.cancel(id);
  return getRun(db, user, id);
}

const sameBootstrap = (a: ModelSpec['bootstrap'], b: ModelSpec['bootstrap']) => JSON.stringify(a ?? null) === JSON.stringify(b ?? null);

/**
 * A new run of a finished run's frozen spec and edition on another basis (runs never change).
 * Bootstrap settings: the body's, else the run's own, else (basis 'bootstrap') the defaults.
 * @throws 409 unless the run finished; 422 for robust on a second-stage or iterated run (the
 *   message points to the first-stage copy) or when nothing would change.
 */
export function changeRunBasis(deps: RunDeps, user: User, runId: number, body: ChangeBasisBody): Run {
  const row = ownRunRow(deps.db, user, runId, 'start it on another basis');
  if (row.status !== 'finished')
    throw new KeelsonApiError('conflict', `Run ${runId} is ${row.status}; only a finished run can be run again on another basis`);
  const spec = modelSpecSchema.parse(JSON.parse(row.spec));
  if (body.basis === 'robust' && spec.stage !== 'first') {
    const stage = spec.stage === 'second' ? 'second-stage' : 'iterated';
    const message =
      `The robust basis needs a first-stage run, and run #${runId} is ${stage}: its weighting depends on b, so misspecification-robust SEs are not defined. ` +
      `Make a first-stage copy of it (POST /api/v1/runs/${runId}/first-stage-copy) to get robust verdicts.`;
    throw new KeelsonApiError('unprocessable', message, [{ path: ['basis'], message }]);
  }
  const bootstrap = body.bootstrap
    ? specBootstrapSchema.parse(body.bootstrap)
    : (spec.bootstrap ?? (body.basis === 'bootstrap' ? specBootstrapSchema.parse({}) : undefined));
  const next: ModelSpec = { ...spec, basis: body.basis };
  if (bootstrap) next.bootstrap = bootstrap;
  else delete next.bootstrap;
  if (resolveBasis(spec) === body.basis && sameBootstrap(spec.bootstrap, next.bootstrap)) {
    const message = `Run #${runId} already rests on the ${body.basis} basis with these settings; nothing would change`;
    throw new KeelsonApiError('unprocessable', message, [{ path: ['basis'], message }]);
  }
  const c = checkRun(deps, user, next, row.editionId);
  const est = estimateUnlessHeavy(deps, c);
  const { row: created, jobId } = inTransaction(deps.db, (tx) => insertRun(tx, user, c, est, { specId: row.specId, specName: row.specName, basedOnRunId: runId }));
  afterInsert(deps, user, c, est, created, jobId);
  return toRun(created, user.name, 'none');
}

const FIRST_STAGE_SUFFIX = ' (first stage)';
function firstStageName(name: string): string {
  return `${name.slice(0, 120 - FIRST_STAGE_SUFFIX.length)}${FIRST_STAGE_SUFFIX}`;
}

/**
 * Copies a run's spec with stage 'first' and basis 'robust' (weighting, lag, drop set and
 * bootstrap settings kept) and starts a run of it on the same edition. When the run came from a
 * saved spec, the copy is saved as a new model spec "<name> (first stage)" in the same
 * transaction as its run; otherwise spec is null.
 * @throws 422 when the run is already first-stage (change its basis instead).
 */
export function firstStageCopy(deps: RunDeps, user: User, runId: number): FirstStageCopyResponse {
  const row = ownRunRow(deps.db, user, runId, 'make a first-stage copy of it');
  const spec = modelSpecSchema.parse(JSON.parse(row.spec));
  if (spec.stage === 'first') {
    const message = `Run #${runId} is already first-stage; to change its basis, start it on another basis (POST /api/v1/runs/${runId}/basis)`;
    throw new KeelsonApiError('unprocessable', message, [{ path: ['stage'], message }]);
  }
  const next: ModelSpec = { ...spec, stage: 'first', basis: 'robust' };
  const c = checkRun(deps, user, next, row.editionId);
  const est = estimateUnlessHeavy(deps, c);
  const savedFrom = row.specId !== null ? findSpecRow(deps.db, user, row.specId) : null;
  const baseName = row.specName ?? savedFrom?.name ?? null;
  const out = inTransaction(deps.db, (tx) => {
    let saved: SavedSpec | null = null;
    if (savedFrom) saved = insertSpec(tx, user, c.data, firstStageName(baseName ?? savedFrom.name), c.spec, savedFrom.id);
    const written = insertRun(tx, user, c, est, {
      specId: saved?.id ?? null,
      specName: saved?.name ?? (baseName ? firstStageName(baseName) : null),
      basedOnRunId: runId,
    });
    return { ...written, saved };
  });
  afterInsert(deps, user, c, est, out.row, out.jobId);
  return { run: toRun(out.row, user.name, 'none'), spec: out.saved };
}

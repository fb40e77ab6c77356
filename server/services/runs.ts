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
import { estimateLedger, GmmInputError } from '../../lib/gmm/index';
import { gmmFailureMessage } from '../../shared/gmm-messages';
import type { EditionData } from './edition-data';
import { bootstrapSettingsOf, buildLedgerInput, RunDataError } from './ledger-input';
import { findSpecRow, insertSpec, loadAndCheck, specForRun } from './specs';
import { assertBootstrapAccepted, bootstrapCheckInput } from './jobs-input';
import { audit } from './audit';
import { sendMailInBackground } from './mail';
import type { Mailer } from './mailer';
import type { JobRunner } from '../jobs/runner';
import { KEELSON_VERSION } from '../version';
import { preparedFor } from '../db/prepared';
import { canReadLibrary } from './edition-data';
import { runResultColumns } from './run-shape';

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

/** Input mistakes of lib/gmm that mean the request (not the data) is wrong. */
const REQUEST_ERROR_CODES = new Set(['invalid-option', 'invalid-lags', 'too-few-assets', 'unknown-factor', 'duplicate-name', 'length-mismatch', 'empty-input']);

export { buildLedgerInput, RunDataError } from './ledger-input';

/**
 * Runs the estimator; data refusals come back as `{ ok: false, error }`, request mistakes throw a
 * 422, anything else propagates.
 */
export function estimate(spec: ModelSpec, data: EditionData, dropSetOverride?: string[]): { ok: true; result: EngineResult } | { ok: false; error: string } {
  let dates: string[] = [];
  try {
    const built = buildLedgerInput(spec, data, dropSetOverride);
    dates = built.dates;
    const out = estimateLedger(built.input);
    return out.ok ? { ok: true, result: out.ledger } : { ok: false, error: gmmFailureMessage(out) };
  } catch (e) {
    if (e instanceof RunDataError) return { ok: false, error: e.message };
    if (e instanceof GmmInputError) {
      if (REQUEST_ERROR_CODES.has(e.code)) throw new KeelsonApiError('unprocessable', e.message);
      const when = e.row !== undefined && dates[e.row] ? ` (date ${dates[e.row]})` : '';
      return { ok: false, error: `${e.message}${when}` };
    }
    throw e;
  }
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
  const summary = toSummary(row, authorName, signoff);
  const head = JSON.stringify({ ...summary, spec: modelSpecSchema.parse(JSON.parse(row.spec)), result: null });
  return `{"run":${head.slice(0, -'null}'.length)}${row.result ?? 'null'}}}`;
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
}

export const RUN_MAIL_AFTER_MS = 60_000;

export interface CreateRunArgs {
  specId?: number;
  editionId?: number;
  spec?: ModelSpec;
  name?: string;
}

/** A run estimated and checked, not yet written. */
interface PreparedRun {
  spec: ModelSpec;
  data: EditionData;
  outcome: ReturnType<typeof estimate>;
  startedAt: string;
  finishedAt: string;
  tookMs: number;
  /** The bootstrap job to start with the run (only when the ledger finished). */
  bootstrap: { params: Record<string, unknown>; total: number } | null;
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
 * Checks the spec against the edition, estimates, and — when the spec asks for bootstrap
 * p-values and the ledger finished — checks that lib/gmm accepts the bootstrap. Throws 4xx
 * (nothing written yet) for a request mistake.
 */
function prepareRun(deps: RunDeps, user: User, rawSpec: ModelSpec, editionId: number): PreparedRun {
  const clock = deps.clock ?? Date.now;
  const spec = freezeSpec(rawSpec);
  const { data } = loadAndCheck(deps.db, user, editionId, spec);
  const t0 = clock();
  const startedAt = new Date().toISOString();
  const outcome = estimate(spec, data);
  const finishedAt = new Date().toISOString();
  const tookMs = clock() - t0;
  let bootstrap: PreparedRun['bootstrap'] = null;
  if (outcome.ok && spec.bootstrap) {
    const params: Record<string, unknown> = { ...bootstrapSettingsOf(spec.bootstrap) };
    const check = bootstrapCheckInput(spec, buildLedgerInput(spec, data).input, params);
    assertBootstrapAccepted(check);
    bootstrap = { params, total: check.total };
  }
  return { spec, data, outcome, startedAt, finishedAt, tookMs, bootstrap };
}

/** Writes a prepared run (and its bootstrap job) inside the caller's transaction. */
function insertRun(
  tx: Db,
  user: User,
  p: PreparedRun,
  ref: { specId: number | null; specName: string | null; basedOnRunId?: number },
): { row: RunRow; jobId: number | null } {
  const status: RunStatus = p.outcome.ok ? 'finished' : 'failed';
  let row = tx
    .insert(runs)
    .values({
      specId: ref.specId,
      specName: ref.specName,
      editionId: p.data.editionId,
      libraryId: p.data.libraryId,
      libraryName: p.data.libraryName,
      editionNumber: p.data.number,
      spec: JSON.stringify(p.spec),
      keelsonVersion: KEELSON_VERSION,
      authorId: user.id,
      status,
      error: p.outcome.ok ? null : p.outcome.error,
      ...runResultColumns(p.outcome.ok ? p.outcome.result : null),
      startedAt: p.startedAt,
      finishedAt: p.finishedAt,
    })
    .returning()
    .get();
  audit(tx, user.id, `run.${status}`, {
    runId: row.id,
    specId: ref.specId,
    editionId: p.data.editionId,
    basis: p.spec.basis,
    ...(ref.basedOnRunId !== undefined ? { basedOnRunId: ref.basedOnRunId } : {}),
  });
  let jobId: number | null = null;
  if (p.bootstrap) {
    const job = tx
      .insert(jobs)
      .values({ kind: 'bootstrap', runId: row.id, authorId: user.id, params: JSON.stringify(p.bootstrap.params), status: 'queued', done: 0, total: p.bootstrap.total, attempts: 1 })
      .returning()
      .get();
    jobId = job.id;
    row = tx.update(runs).set({ bootstrapJobId: job.id }).where(eq(runs.id, row.id)).returning().get();
    audit(tx, user.id, 'job.started', { jobId: job.id, runId: row.id, kind: 'bootstrap', withRun: true });
  }
  return { row, jobId };
}

/** After the write: start the bootstrap job, and mail the author if the run took long enough. */
function afterInsert(deps: RunDeps, user: User, p: PreparedRun, row: RunRow, jobId: number | null): void {
  if (jobId !== null) deps.runner.start(jobId);
  if (p.tookMs < (deps.mailAfterMs ?? RUN_MAIL_AFTER_MS)) return;
  const { outcome, data } = p;
  const link = deps.publicUrl ? `\n${deps.publicUrl.replace(/\/$/, '')}/runs/${row.id}\n` : '';
  const title = row.specName ? `“${row.specName}”` : `on ${data.libraryName} edition ${data.number}`;
  const took = `after ${Math.round(p.tookMs / 1000)} s`;
  mailInBackground(deps.db, deps.mailer, {
    to: user.email,
    subject: outcome.ok ? `Run #${row.id} finished` : `Run #${row.id} failed`,
    text: outcome.ok
      ? `Your run #${row.id} ${title} finished ${took}: N = ${outcome.result.N} test assets, K = ${outcome.result.K} factors, T = ${outcome.result.T} periods.\n` +
        `J = ${outcome.result.J.stat.toFixed(2)} (df ${outcome.result.J.df}, p = ${outcome.result.J.p.toFixed(3)}).${link}\n` +
        'Results are statistical evidence about a model on past data, not investment advice.\n'
      : `Your run #${row.id} ${title} failed ${took}: ${outcome.error}${link}`,
  });
}

/**
 * Estimates and stores a run (finished or failed) in one transaction with its audit line (and
 * its bootstrap job when the spec asks for one), then mails the author after a long run. Throws
 * 4xx (nothing written) when the request is invalid; 409 for an archived saved spec.
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
  const p = prepareRun(deps, user, spec, editionId);
  const { row, jobId } = inTransaction(deps.db, (tx) => insertRun(tx, user, p, { specId, specName }));
  afterInsert(deps, user, p, row, jobId);
  return toRun(row, user.name, 'none');
}

/** The run row for a change that makes a new run from it: readable, and the caller's own (or an admin). */
function ownRunRow(db: Db, user: User, id: number, doing: string): RunRow {
  const row = findRunRow(db, user, id);
  if (user.role !== 'admin' && row.authorId !== user.id)
    throw new KeelsonApiError('forbidden', `Run ${id} was started by someone else; only its author or an admin may ${doing}`);
  return row;
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
  const p = prepareRun(deps, user, next, row.editionId);
  const { row: created, jobId } = inTransaction(deps.db, (tx) => insertRun(tx, user, p, { specId: row.specId, specName: row.specName, basedOnRunId: runId }));
  afterInsert(deps, user, p, created, jobId);
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
  const p = prepareRun(deps, user, next, row.editionId);
  const savedFrom = row.specId !== null ? findSpecRow(deps.db, user, row.specId) : null;
  const baseName = row.specName ?? savedFrom?.name ?? null;
  const out = inTransaction(deps.db, (tx) => {
    let saved: SavedSpec | null = null;
    if (savedFrom) saved = insertSpec(tx, user, p.data, firstStageName(baseName ?? savedFrom.name), p.spec, savedFrom.id);
    const written = insertRun(tx, user, p, {
      specId: saved?.id ?? null,
      specName: saved?.name ?? (baseName ? firstStageName(baseName) : null),
      basedOnRunId: runId,
    });
    return { ...written, saved };
  });
  afterInsert(deps, user, p, out.row, out.jobId);
  return { run: toRun(out.row, user.name, 'none'), spec: out.saved };
}

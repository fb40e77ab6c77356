/**
 * Runs: one estimation of a model spec on one library edition, synchronously in the request
 * (a demo-size run takes milliseconds).
 *
 * What is refused and how:
 * - the request itself is invalid (shape: 400 `validation_failed`; the spec does not fit the
 *   edition — unknown series, wrong kind, T ≤ N + K, lag ≥ T: 422 `unprocessable`): nothing is written.
 * - the data refuse the model (missing values in the window, a constant or collinear series,
 *   a singular system): the run is stored as `failed` with the reason in words, and the API
 *   answers 201 with status "failed" and `error`.
 * Finished runs are immutable: there is no route that changes a run, and the service refuses to.
 */
import { and, desc, eq, inArray, type SQL } from 'drizzle-orm';
import type { Db } from '../db/client';
import { inTransaction } from '../db/client';
import { runs, signoffs, users } from '../db/schema/index';
import { KeelsonApiError } from '../../shared/errors';
import type { User } from '../../shared/auth';
import { modelSpecSchema, windowRange, type ModelSpec } from '../../shared/specs';
import type { LedgerResult, Run, RunListQuery, RunStatus, RunSummary, SignoffState } from '../../shared/runs';
import type { LedgerResult as EngineResult } from '../../lib/gmm/index';
import { estimateLedger, GmmInputError, GmmNumericalError, type LedgerInput } from '../../lib/gmm/index';
import type { EditionData } from './edition-data';
import { canReadEdition, loadAndCheck, specForRun } from './specs';
import { audit } from './audit';
import { sendMailInBackground } from './mail';
import type { Mailer } from './mailer';
import { KEELSON_VERSION } from '../version';

type RunRow = typeof runs.$inferSelect;

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
const REQUEST_ERROR_CODES = new Set(['invalid-option', 'invalid-lags', 'unknown-factor', 'duplicate-name', 'length-mismatch', 'empty-input']);

/** Failure the data caused; stored on a failed run. */
export class RunDataError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'RunDataError';
  }
}

/**
 * Builds estimateLedger's input from a spec and an edition: window, risk-free subtraction,
 * traded flags. Throws RunDataError naming the series and first date of missing values.
 */
export function buildLedgerInput(spec: ModelSpec, data: EditionData, dropSetOverride?: string[]): { input: LedgerInput; dates: string[] } {
  const [from, to] = windowRange(data.dates, spec.window);
  const dates = data.dates.slice(from, to);
  const byName = new Map(data.series.map((s) => [s.name, s]));
  const values = (name: string) => {
    const s = byName.get(name);
    if (!s) throw new KeelsonApiError('unprocessable', `The edition has no series '${name}'`);
    return s.values.slice(from, to);
  };
  const used = [...spec.assets, ...spec.factors, ...(spec.rf ? [spec.rf] : [])];
  const gaps: { name: string; t: number }[] = [];
  for (const name of used) {
    const v = values(name);
    const t = v.findIndex((x) => x === null || x === undefined || !Number.isFinite(x));
    if (t >= 0) gaps.push({ name, t });
  }
  if (gaps.length > 0) {
    gaps.sort((a, b) => a.t - b.t);
    const list = gaps
      .slice(0, 5)
      .map((g) => `'${g.name}' first on ${dates[g.t]}`)
      .join('; ');
    const more = gaps.length > 5 ? ` and ${gaps.length - 5} more series` : '';
    throw new RunDataError(
      `Missing values in the window ${dates[0]} – ${dates[dates.length - 1]}: ${list}${more}. Choose a window without gaps or leave those series out.`,
    );
  }
  const rf = spec.rf ? (values(spec.rf) as number[]) : null;
  const assetCols = spec.assets.map((a) => {
    const v = values(a) as number[];
    return rf ? v.map((x, t) => x - rf[t]) : v;
  });
  const factorCols = spec.factors.map((f) => values(f) as number[]);
  const T = dates.length;
  const returns: number[][] = [];
  const factors: number[][] = [];
  for (let t = 0; t < T; t++) {
    returns.push(assetCols.map((c) => c[t]));
    factors.push(factorCols.map((c) => c[t]));
  }
  const dropSet = dropSetOverride ?? spec.dropSet;
  return {
    dates,
    input: {
      assetNames: spec.assets,
      returns,
      factorNames: spec.factors,
      factors,
      traded: spec.factors.map((f) => !spec.nonTraded.includes(f)),
      options: {
        stage: spec.stage,
        weighting: spec.weighting,
        lags: spec.lags,
        form: spec.form,
        factorMeansKnown: spec.factorMeansKnown,
        level: spec.level,
        ...(dropSet && dropSet.length > 0 ? { dropSet } : {}),
      },
    },
  };
}

/**
 * Runs the estimator; data refusals come back as `{ ok: false, error }`, request mistakes throw a
 * 422, anything else propagates.
 */
export function estimate(spec: ModelSpec, data: EditionData, dropSetOverride?: string[]): { ok: true; result: EngineResult } | { ok: false; error: string } {
  let dates: string[] = [];
  try {
    const built = buildLedgerInput(spec, data, dropSetOverride);
    dates = built.dates;
    return { ok: true, result: estimateLedger(built.input) };
  } catch (e) {
    if (e instanceof RunDataError) return { ok: false, error: e.message };
    if (e instanceof GmmInputError) {
      if (REQUEST_ERROR_CODES.has(e.code)) throw new KeelsonApiError('unprocessable', e.message);
      const when = e.row !== undefined && dates[e.row] ? ` (date ${dates[e.row]})` : '';
      return { ok: false, error: `${e.message}${when}` };
    }
    if (e instanceof GmmNumericalError) return { ok: false, error: `The estimation could not be solved: ${e.message}` };
    throw e;
  }
}

// ---- reading ----

function signoffStates(db: Db, runIds: number[]): Map<number, SignoffState> {
  const out = new Map<number, SignoffState>();
  if (runIds.length === 0) return out;
  const decided = db
    .select({ runId: signoffs.runId, decision: signoffs.decision, id: signoffs.id })
    .from(signoffs)
    .where(inArray(signoffs.runId, runIds))
    .orderBy(signoffs.id)
    .all();
  const lastDecision = new Map<number, { id: number; decision: 'approved' | 'changes-requested' }>();
  for (const d of decided) lastDecision.set(d.runId, d);
  const open = db.$client
    .prepare(`select run_id as runId, max(id) as id from signoff_requests where answered_at is null and run_id in (${runIds.map(() => '?').join(',')}) group by run_id`)
    .all(...runIds) as { runId: number; id: number }[];
  const openBy = new Map(open.map((o) => [o.runId, o.id]));
  for (const id of runIds) {
    const d = lastDecision.get(id);
    const o = openBy.get(id);
    // A request newer than the last decision means a sign-off is awaited again.
    if (o !== undefined) out.set(id, 'requested');
    else if (d) out.set(id, d.decision);
    else out.set(id, 'none');
  }
  return out;
}

function parseResult(row: RunRow): LedgerResult | null {
  return row.result ? (JSON.parse(row.result) as LedgerResult) : null;
}

function toSummary(row: RunRow, authorName: string, signoff: SignoffState): RunSummary {
  const result = parseResult(row);
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
    N: result?.N ?? null,
    K: result?.K ?? null,
    T: result?.T ?? null,
    factors: spec.factors,
  };
}

function toRun(row: RunRow, authorName: string, signoff: SignoffState): Run {
  return { ...toSummary(row, authorName, signoff), spec: modelSpecSchema.parse(JSON.parse(row.spec)), result: parseResult(row) };
}

/** The run row, if it exists and `user` may read its library; else 404. */
export function findRunRow(db: Db, user: User, id: number): RunRow {
  const row = db.select().from(runs).where(eq(runs.id, id)).get();
  if (!row || !canReadEdition(db, user, row.editionId)) throw new KeelsonApiError('not_found', `No run ${id}`);
  return row;
}

function nameOf(db: Db, id: number): string {
  return db.select({ name: users.name }).from(users).where(eq(users.id, id)).get()?.name ?? `user ${id}`;
}

export function getRun(db: Db, user: User, id: number): Run {
  const row = findRunRow(db, user, id);
  return toRun(row, nameOf(db, row.authorId), signoffStates(db, [row.id]).get(row.id) ?? 'none');
}

/** The stored result text exactly as estimated (404 for a run without a result). */
export function getRunResultText(db: Db, user: User, id: number): string {
  const row = findRunRow(db, user, id);
  if (!row.result) throw new KeelsonApiError('conflict', `Run ${id} is ${row.status}; it has no result${row.error ? `: ${row.error}` : ''}`);
  return row.result;
}

export function listRuns(db: Db, user: User, q: RunListQuery): RunSummary[] {
  const conds: SQL[] = [];
  if (q.specId) conds.push(eq(runs.specId, q.specId));
  if (q.libraryId) conds.push(eq(runs.libraryId, q.libraryId));
  if (q.editionId) conds.push(eq(runs.editionId, q.editionId));
  if (q.status) conds.push(eq(runs.status, q.status));
  if (q.authorId) conds.push(eq(runs.authorId, q.authorId));
  const rows = db
    .select({ r: runs, authorName: users.name })
    .from(runs)
    .innerJoin(users, eq(users.id, runs.authorId))
    .where(conds.length ? and(...conds) : undefined)
    .orderBy(desc(runs.id))
    .limit(2000)
    .all();
  const cache = new Map<number, boolean>();
  const visible = rows.filter((x) => canReadEdition(db, user, x.r.editionId, cache));
  const states = signoffStates(
    db,
    visible.map((x) => x.r.id),
  );
  let out = visible.map((x) => toSummary(x.r, x.authorName, states.get(x.r.id) ?? 'none'));
  if (q.signoff) out = out.filter((r) => r.signoff === q.signoff);
  return out.slice(0, q.limit ?? 200);
}

export function runSummariesByIds(db: Db, ids: number[]): Map<number, RunSummary> {
  if (ids.length === 0) return new Map();
  const rows = db.select({ r: runs, authorName: users.name }).from(runs).innerJoin(users, eq(users.id, runs.authorId)).where(inArray(runs.id, ids)).all();
  const states = signoffStates(db, ids);
  return new Map(rows.map((x) => [x.r.id, toSummary(x.r, x.authorName, states.get(x.r.id) ?? 'none')]));
}

// ---- creating ----

export interface CreateRunArgs {
  specId?: number;
  editionId?: number;
  spec?: ModelSpec;
  name?: string;
}

/**
 * Estimates and stores a run (finished or failed) in one transaction with its audit line, then
 * mails the author. Throws 4xx (nothing written) when the request is invalid.
 */
export function createRun(db: Db, mailer: Mailer, user: User, args: CreateRunArgs, publicUrl?: string): Run {
  let spec: ModelSpec;
  let specId: number | null = null;
  let specName: string | null = args.name ?? null;
  let editionId: number;
  if (args.specId !== undefined) {
    const saved = specForRun(db, user, args.specId);
    spec = saved.spec;
    specId = saved.row.id;
    specName = saved.row.name;
    editionId = args.editionId ?? saved.row.editionId;
  } else {
    if (!args.spec || args.editionId === undefined) throw new KeelsonApiError('validation_failed', 'Give editionId and spec, or specId');
    spec = args.spec;
    editionId = args.editionId;
  }
  const { data } = loadAndCheck(db, user, editionId, spec);
  const startedAt = new Date().toISOString();
  const outcome = estimate(spec, data);
  const finishedAt = new Date().toISOString();
  const status: RunStatus = outcome.ok ? 'finished' : 'failed';
  const row = inTransaction(db, (tx) => {
    const r = tx
      .insert(runs)
      .values({
        specId,
        specName,
        editionId: data.editionId,
        libraryId: data.libraryId,
        libraryName: data.libraryName,
        editionNumber: data.number,
        spec: JSON.stringify(spec),
        keelsonVersion: KEELSON_VERSION,
        authorId: user.id,
        status,
        error: outcome.ok ? null : outcome.error,
        result: outcome.ok ? JSON.stringify(outcome.result) : null,
        startedAt,
        finishedAt,
      })
      .returning()
      .get();
    audit(tx, user.id, `run.${status}`, { runId: r.id, specId, editionId: data.editionId });
    return r;
  });
  const link = publicUrl ? `\n${publicUrl.replace(/\/$/, '')}/runs/${row.id}\n` : '';
  const title = specName ? `“${specName}”` : `on ${data.libraryName} edition ${data.number}`;
  mailInBackground(db, mailer, {
    to: user.email,
    subject: outcome.ok ? `Run #${row.id} finished` : `Run #${row.id} failed`,
    text: outcome.ok
      ? `Your run #${row.id} ${title} finished: N = ${outcome.result.N} test assets, K = ${outcome.result.K} factors, T = ${outcome.result.T} periods.\n` +
        `J = ${outcome.result.J.stat.toFixed(2)} (df ${outcome.result.J.df}, p = ${outcome.result.J.p.toFixed(3)}).${link}\n` +
        'Results are statistical evidence about a model on past data, not investment advice.\n'
      : `Your run #${row.id} ${title} failed: ${outcome.error}${link}`,
  });
  return toRun(row, user.name, 'none');
}

/** Guard for any future code path that would change a run: finished, failed and cancelled runs are final. */
export function assertRunMutable(row: Pick<RunRow, 'id' | 'status'>): void {
  if (row.status === 'finished' || row.status === 'failed' || row.status === 'cancelled')
    throw new KeelsonApiError('conflict', `Run ${row.id} is ${row.status}; runs cannot be changed once they end`);
}

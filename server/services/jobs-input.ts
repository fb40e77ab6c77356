/**
 * Turns a finished run plus a deep check's parameters into the pure input of lib/gmm's check,
 * reusing the run's frozen spec and edition (runs service `buildLedgerInput`). Mistakes that the
 * request can fix are 422 `unprocessable` before any job is written.
 */
import type { Db } from '../db/client';
import { KeelsonApiError } from '../../shared/errors';
import { gmmFailureMessage } from '../../shared/gmm-messages';
import { modelSpecSchema, type ModelSpec } from '../../shared/specs';
import {
  bootstrapParamsSchema,
  holdoutParamsSchema,
  rollingParamsSchema,
  subsetSweepParamsSchema,
  JOB_LIMITS,
  drawsLimitText,
  sweepLimitText,
  type JobKind,
  type JobMode,
} from '../../shared/jobs';
import {
  defaultBlockLength,
  GmmInputError,
  prepareBootstrap,
  resolveLag,
  resolveSplit,
  rollingWindows,
  type BootstrapInput,
  type HoldoutInput,
  type RollingHoldoutInput,
  type RollingInput,
  type SubsetSweepInput,
} from '../../lib/gmm/index';
import { loadEditionData } from './edition-data';
import { buildLedgerInput, RunDataError, runOptionsOf } from './ledger-input';
import { splitIndexOf } from './holdout-split';

export type CheckInput =
  | { kind: 'bootstrap'; input: BootstrapInput; total: number }
  | { kind: 'subset-sweep'; input: SubsetSweepInput; total: number }
  | { kind: 'rolling'; input: RollingInput; total: number }
  /** One split (total 1), or the rolling hold-out with one unit of progress per priced block. */
  | { kind: 'holdout'; mode: 'split'; input: HoldoutInput; total: number }
  | { kind: 'holdout'; mode: 'rolling'; input: RollingHoldoutInput; total: number };

export interface RunForCheck {
  id: number;
  editionId: number;
  spec: string;
}

function unprocessable(message: string, path: string[] = ['params']): never {
  throw new KeelsonApiError('unprocessable', message, [{ path, message }]);
}

/**
 * The bootstrap of a run's model: the run's frozen spec (stage, weighting, lag, form, factor
 * means and its drop set) on the run's matrices, with the job's draws, scheme, block and seed.
 * Which forms and options the bootstrap supports is lib/gmm's decision (see
 * `assertBootstrapAccepted`); the server adds no refusal of its own beyond the block length.
 */
export function bootstrapCheckInput(
  spec: ModelSpec,
  input: { returns: readonly (readonly number[])[]; factors: readonly (readonly number[])[]; factorNames: readonly string[] },
  rawParams: unknown,
): Extract<CheckInput, { kind: 'bootstrap' }> {
  const p = bootstrapParamsSchema.parse(rawParams);
  const T = input.returns.length;
  const block = p.scheme === 'block' ? (p.blockLength ?? defaultBlockLength(T)) : undefined;
  if (block !== undefined && block > Math.floor(T / 2))
    unprocessable(`The block length is at most T/2 = ${Math.floor(T / 2)} periods for this run (T = ${T}).`, ['params', 'blockLength']);
  // The run's joint drop set, for the joint bootstrap p-values (lib/gmm reads it when it supports them).
  const joint: Record<string, unknown> = spec.dropSet && spec.dropSet.length > 0 ? { dropSet: [...spec.dropSet] } : {};
  return {
    kind: 'bootstrap',
    total: p.draws,
    input: {
      returns: input.returns,
      factors: input.factors,
      factorNames: input.factorNames,
      options: {
        stage: spec.stage,
        weighting: spec.weighting,
        lags: spec.lags,
        form: spec.form,
        factorMeansKnown: spec.factorMeansKnown,
        scheme: p.scheme,
        ...(block !== undefined ? { blockLength: block } : {}),
        draws: p.draws,
        seed: p.seed ?? 1,
        ...joint,
      },
    },
  };
}

/**
 * Asks lib/gmm whether it accepts the bootstrap (one preparation of the original fit, no draws),
 * so a refusal is a 422 before any job is written rather than a failed job.
 * @throws KeelsonApiError 422 with lib/gmm's message (a caller mistake, or a typed numerical
 *   failure mapped in shared/gmm-messages.ts).
 */
export function assertBootstrapAccepted(check: Extract<CheckInput, { kind: 'bootstrap' }>): void {
  try {
    const prepared = prepareBootstrap(check.input);
    if (!prepared.ok) unprocessable(gmmFailureMessage(prepared));
  } catch (e) {
    if (e instanceof GmmInputError) unprocessable(e.message);
    throw e;
  }
}

const MODE_NAMES: Record<JobMode, string> = { embedded: 'this server runs deep checks without workers', queue: 'this server runs deep checks on queue workers' };

/**
 * The mode's limits (shared/jobs.ts JOB_LIMITS): the request schema allows the largest, this
 * refuses what the server's own mode does not take, naming the limit and the mode.
 * @throws KeelsonApiError 422.
 */
export function assertWithinModeLimits(check: CheckInput, mode: JobMode): void {
  const lim = JOB_LIMITS[mode];
  if (check.kind === 'subset-sweep' && check.input.factorNames.length > lim.sweepCandidates)
    unprocessable(
      `The sweep takes ${sweepLimitText()}; ${MODE_NAMES[mode]}, so name up to ${lim.sweepCandidates} candidates (this request has ${check.input.factorNames.length}).`,
      ['params', 'candidates'],
    );
  if (check.kind === 'bootstrap' && check.total > lim.bootstrapDraws)
    unprocessable(`The bootstrap takes ${drawsLimitText()}; ${MODE_NAMES[mode]}, so ask for up to ${lim.bootstrapDraws} draws (this request has ${check.total}).`, ['params', 'draws']);
}

/**
 * Builds the check input. `params` must already be parsed by the kind's schema (shared/jobs.ts).
 * With `mode`, the mode's limits are checked too (assertWithinModeLimits).
 * @throws KeelsonApiError 422 when the check does not fit the run's data or the mode's limits.
 */
export function buildCheckInput(db: Db, run: RunForCheck, kind: JobKind, rawParams: unknown, mode?: JobMode): CheckInput {
  const check = buildCheckInputAnyMode(db, run, kind, rawParams);
  if (mode) assertWithinModeLimits(check, mode);
  return check;
}

function buildCheckInputAnyMode(db: Db, run: RunForCheck, kind: JobKind, rawParams: unknown): CheckInput {
  const spec: ModelSpec = modelSpecSchema.parse(JSON.parse(run.spec));
  const data = loadEditionData(db, run.editionId);
  const build = (s: ModelSpec) => {
    try {
      return buildLedgerInput(s, data);
    } catch (e) {
      if (e instanceof RunDataError) unprocessable(e.message);
      throw e;
    }
  };
  if (kind === 'bootstrap') return bootstrapCheckInput(spec, build(spec).input, rawParams);
  if (kind === 'subset-sweep') {
    const p = subsetSweepParamsSchema.parse(rawParams);
    const candidates = p.candidates ?? spec.factors;
    if (candidates.length > JOB_LIMITS.queue.sweepCandidates)
      unprocessable(`The sweep takes ${sweepLimitText()}; the run has ${candidates.length} factors. Name the candidates.`, ['params', 'candidates']);
    if (new Set(candidates).size !== candidates.length) unprocessable('A candidate factor is named twice.', ['params', 'candidates']);
    const kindOf = new Map(data.series.map((s) => [s.name, s]));
    for (const c of candidates) {
      const s = kindOf.get(c);
      if (!s) unprocessable(`The run's edition has no series '${c}'.`, ['params', 'candidates']);
      if (s.kind !== 'factor') unprocessable(`'${c}' is a ${s.kind === 'rf' ? 'risk-free series' : 'test asset'}, not a factor.`, ['params', 'candidates']);
      if (spec.assets.includes(c)) unprocessable(`'${c}' is a test asset of this run.`, ['params', 'candidates']);
    }
    const sweepSpec: ModelSpec = {
      ...spec,
      factors: candidates,
      nonTraded: candidates.filter((c) => !kindOf.get(c)!.traded),
      dropSet: undefined,
    };
    const { input } = build(sweepSpec);
    // The edition's traded flags for the squared-Sharpe ranking of the subsets (traded candidates only).
    const traded = candidates.map((c) => kindOf.get(c)!.traded);
    if (input.returns.length <= input.assetNames.length + candidates.length)
      unprocessable(`T = ${input.returns.length} periods is too few for N = ${input.assetNames.length} assets and ${candidates.length} candidates.`);
    return {
      kind,
      total: 2 ** candidates.length - 1,
      input: {
        returns: input.returns,
        factors: input.factors,
        factorNames: candidates,
        traded,
        options: {
          lags: spec.lags,
          form: spec.form,
          factorMeansKnown: spec.factorMeansKnown,
          weighting: spec.weighting,
          // W* as in the run's own drop tests: the last iterate for an iterated run, else the two-step estimate.
          stage: spec.stage === 'iterated' ? 'iterated' : 'second',
          level: spec.level,
          topPerSize: p.topPerSize,
        },
      },
    };
  }
  if (kind === 'holdout') return holdoutCheckInput(spec, build(spec), rawParams);
  const p = rollingParamsSchema.parse(rawParams);
  const { input, dates } = build(spec);
  const T = input.returns.length;
  const N = input.assetNames.length;
  const K = input.factorNames.length;
  if (p.length > T) unprocessable(`The window of ${p.length} periods is longer than the run's sample (T = ${T}).`, ['params', 'length']);
  if (p.length <= N + K) unprocessable(`A window of ${p.length} periods is too short for N = ${N} assets and K = ${K} factors: use more than ${N + K}.`, ['params', 'length']);
  // Each window is estimated with the run's lag, and methods.md refuses a lag ≥ T/4 of the window.
  if (typeof spec.lags === 'number' && 4 * spec.lags >= p.length)
    unprocessable(
      `A window of ${p.length} periods is too short for the run's HAC lag of ${spec.lags}: the lag must be below a quarter of the window, so use at least ${4 * spec.lags + 1} periods.`,
      ['params', 'length'],
    );
  const windows = rollingWindows(T, { kind: p.window, length: p.length, step: p.step });
  return {
    kind,
    total: windows.length,
    input: {
      returns: input.returns,
      factors: input.factors,
      factorNames: input.factorNames,
      dates,
      window: { kind: p.window, length: p.length, step: p.step },
      options: runOptionsOf(spec),
    },
  };
}

/**
 * The hold-out check of a run's model (lib/gmm holdout.ts; Kozak, Nagel and Santosh 2020): the
 * run's frozen spec (stage, weighting, lag, form, factor means) estimates b̂ before the split and
 * prices the periods after it. Refusals (422, before any job is written): a split outside the
 * sample or leaving fewer than N + K + 1 periods on either side; a rolling window shorter than
 * N + K + 1 or too short for the run's lag, or leaving no block to price.
 */
export function holdoutCheckInput(
  spec: ModelSpec,
  built: { input: { returns: readonly (readonly number[])[]; factors: readonly (readonly number[])[]; factorNames: readonly string[]; assetNames: readonly string[] }; dates: string[] },
  rawParams: unknown,
): Extract<CheckInput, { kind: 'holdout' }> {
  const p = holdoutParamsSchema.parse(rawParams);
  const { input, dates } = built;
  const T = input.returns.length;
  const N = input.assetNames.length;
  const K = input.factorNames.length;
  const options = { stage: spec.stage, weighting: spec.weighting, lags: spec.lags, form: spec.form, factorMeansKnown: spec.factorMeansKnown };
  const base = { returns: input.returns, factors: input.factors, factorNames: input.factorNames, assetNames: input.assetNames, dates, options };
  const gmm = <R>(f: () => R, path: string[]): R => {
    try {
      return f();
    } catch (e) {
      if (e instanceof GmmInputError) unprocessable(e.message, path);
      throw e;
    }
  };
  if (p.mode === 'split') {
    let index = Math.floor((p.fraction ?? 0) * T);
    if (p.from !== undefined) {
      const at = splitIndexOf(dates, p.from);
      if ('error' in at) unprocessable(at.error, ['params', 'from']);
      index = at.index;
    }
    const path = ['params', p.from !== undefined ? 'from' : 'fraction'];
    gmm(() => resolveSplit({ index }, T, N, K), path);
    gmm(() => resolveLag(spec.lags, index), path);
    return { kind: 'holdout', mode: 'split', total: 1, input: { ...base, split: { index } } };
  }
  const length = p.length!;
  const step = p.step ?? 12;
  if (length < N + K + 1) unprocessable(`A window of ${length} periods is too short for N = ${N} assets and K = ${K} factors: use at least ${N + K + 1}.`, ['params', 'length']);
  if (length > T - 2) unprocessable(`A window of ${length} periods leaves ${Math.max(0, T - length)} of the run's T = ${T} periods to price; the first hold-out block needs at least 2.`, ['params', 'length']);
  if (typeof spec.lags === 'number' && 4 * spec.lags >= length)
    unprocessable(
      `A window of ${length} periods is too short for the run's HAC lag of ${spec.lags}: the lag must be below a quarter of the window, so use at least ${4 * spec.lags + 1} periods.`,
      ['params', 'length'],
    );
  return { kind: 'holdout', mode: 'rolling', total: holdoutBlocks(T, length, step).length, input: { ...base, window: { kind: 'rolling', length, step } } };
}

/** The rolling hold-out's blocks: window [s, s + n), priced block [s + n, min(T, s + n + h)), s = 0, h, 2h, … (blocks of at least 2 periods). */
export function holdoutBlocks(T: number, length: number, step: number): { start: number; end: number; blockEnd: number }[] {
  const out: { start: number; end: number; blockEnd: number }[] = [];
  for (let s = 0; ; s += step) {
    const end = s + length;
    const blockEnd = Math.min(T, end + step);
    if (blockEnd - end < 2) break;
    out.push({ start: s, end, blockEnd });
    if (blockEnd >= T) break;
  }
  return out;
}

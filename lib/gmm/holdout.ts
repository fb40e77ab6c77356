/**
 * Hold-out check: estimate the SDF loadings on one stretch of periods and price the periods after
 * it with them, so that a model is judged on data it has not seen.
 *
 * Formula (plain text). Periods [0, s) estimate b̂ exactly as the run does (sdf-gmm: the run's
 * stage, weighting, lag, form and factorMeansKnown; a lag of 'auto' resolves on the estimation
 * sample's length T₁). On the hold-out periods [s, T), with their own moments (divisor T₂):
 *   m₂ = E_T₂[R],   centred form: C₂ = Cov_T₂(R, f) (around the hold-out factor means),
 *   α₂ = m₂ − C₂ b̂,   R²_oos = 1 − α₂'α₂ / m₂'m₂,   mean |α₂| = (1/N) Σ_i |α₂,i|.
 * Uncentred form: the loadings of m = 1 − b'f price E[R f'], so D₂ = E_T₂[R f'] replaces C₂
 * (α₂ = m₂ − D₂ b̂); the result says so in `note`. R²_oos can be negative: the model prices the
 * hold-out worse than a zero prediction of every mean. The in-sample counterpart
 * R²_in = 1 − ê'ê / m₁'m₁ (ê the estimation-sample pricing errors) is reported beside it.
 * Rolling version: windows [s, s + n) (rolling) or [0, s + n) (expanding), s = 0, h, 2h, …;
 * each window re-estimates b̂ and prices the next block [e, min(e + h, T)) of h periods (the last
 * block may be shorter, at least 2 periods); one row per block, and a pooled
 * R²_oos = 1 − Σ α₂'α₂ / Σ m₂'m₂ over the blocks.
 * Sizes: a single split must leave at least N + K + 1 periods on each side (the estimation
 * sample needs T₁ > N + K; the same floor for the hold-out keeps C₂ from being mostly noise);
 * rolling windows need n ≥ N + K + 1, blocks at least 2 periods (a covariance needs two).
 *
 * Paper: Kozak, S., Nagel, S. and Santosh, S. (2020), "Shrinking the Cross-Section", Journal of
 * Financial Economics 135(2), 271–292 (out-of-sample cross-sectional R² on hold-out periods).
 * Estimation: Hansen (1982, Econometrica); Kan, Robotti and Shanken (2013, JF).
 *
 * @example
 * const r = holdoutPricing({ returns, factors, factorNames: ['MKT', 'CARRY'], split: { fraction: 0.7 },
 *   options: { stage: 'first', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false } });
 * // r.T1 + r.T2 === T; r.alpha[i] = r.holdoutMean[i] − r.predicted[i]; r.r2oos ≤ 1
 */
import { GmmInputError, type GmmFailure, type GmmFailureCode } from './errors';
import { resolveLag } from './hac';
import { fromNested } from './linalg';
import { momentsFromPacked, type MomentData } from './moments';
import { fitSdfGmm, type FirstStageWeighting, type GmmStage, type SdfForm } from './sdf-gmm';
import { validateMatrices } from './validate';

export interface HoldoutOptions {
  readonly stage: GmmStage;
  readonly weighting: FirstStageWeighting;
  readonly lags: number | 'auto';
  readonly form: SdfForm;
  readonly factorMeansKnown: boolean;
}

/** Where the hold-out starts: `index` = the number of estimation periods (0-based first hold-out period), or a fraction of T (rounded down). */
export type HoldoutSplit = { readonly index: number } | { readonly fraction: number };

export interface HoldoutInput {
  /** T×N excess returns. */
  readonly returns: readonly (readonly number[])[];
  /** T×K factors. */
  readonly factors: readonly (readonly number[])[];
  readonly factorNames: readonly string[];
  readonly assetNames?: readonly string[];
  /** Period labels (T), for the split date. */
  readonly dates?: readonly string[];
  readonly split: HoldoutSplit;
  readonly options: HoldoutOptions;
}

export interface HoldoutFit {
  readonly ok: true;
  readonly T1: number;
  readonly T2: number;
  readonly lags: number;
  readonly form: SdfForm;
  /** b̂ from the estimation periods (K). */
  readonly b: readonly number[];
  /** α₂ per asset (N). */
  readonly alpha: readonly number[];
  /** m₂ per asset: the hold-out mean excess return (N). */
  readonly holdoutMean: readonly number[];
  /** C₂ b̂ (or D₂ b̂): the hold-out mean the model predicts (N). */
  readonly predicted: readonly number[];
  readonly meanAbsAlpha: number;
  readonly r2oos: number;
  /** 1 − ê'ê / m₁'m₁ of the estimation sample. */
  readonly r2in: number;
  /** α₂'α₂ and m₂'m₂ (for pooling). */
  readonly sse: number;
  readonly sst: number;
  /** How the hold-out was priced (the uncentred form's D₂). */
  readonly note: string | null;
}

/** The typed numerical failure of this module (the library's one failure shape, errors.ts). */
export type HoldoutFailure = GmmFailure;

export interface HoldoutResult extends HoldoutFit {
  /** First hold-out period (0-based) and its date. */
  readonly split: number;
  readonly splitDate: string | null;
  readonly assetNames: readonly string[];
  readonly factorNames: readonly string[];
}

const UNCENTRED_NOTE =
  'Uncentred form: the loadings of m = 1 − b′f price E[R f′], so the hold-out pricing errors use D₂ = E_T₂[R f′] (not the covariances C₂).';

/**
 * Price the moments `hold` with the loadings estimated on `est` (both from momentsFromPacked,
 * same N and K). Pass the same moments twice to price the estimation sample itself.
 */
export function holdoutFromMoments(est: MomentData, hold: MomentData, options: Omit<HoldoutOptions, 'lags'> & { lags: number }): HoldoutFit | HoldoutFailure {
  const fit = fitSdfGmm(est, { stage: options.stage, weighting: options.weighting, lags: options.lags, form: options.form, factorMeansKnown: options.factorMeansKnown });
  if (!fit.ok) return { ok: false, code: fit.code, message: fit.message };
  const { N, K } = hold;
  const X2 = options.form === 'centred' ? hold.covRF : hold.crossRF;
  const alpha: number[] = [];
  const predicted: number[] = [];
  let sse = 0;
  let sst = 0;
  let abs = 0;
  for (let i = 0; i < N; i++) {
    let pr = 0;
    for (let k = 0; k < K; k++) pr += X2[i * K + k] * fit.b[k];
    const a = hold.meanR[i] - pr;
    predicted.push(pr);
    alpha.push(a);
    sse += a * a;
    sst += hold.meanR[i] * hold.meanR[i];
    abs += Math.abs(a);
  }
  if (!(sst > 0)) return { ok: false, code: 'not-defined', message: 'Every hold-out mean return is zero: R²_oos is undefined.' };
  let sse1 = 0;
  let sst1 = 0;
  for (let i = 0; i < N; i++) {
    sse1 += fit.alpha[i] * fit.alpha[i];
    sst1 += est.meanR[i] * est.meanR[i];
  }
  return {
    ok: true,
    T1: est.T,
    T2: hold.T,
    lags: options.lags,
    form: options.form,
    b: Array.from(fit.b),
    alpha,
    holdoutMean: Array.from(hold.meanR),
    predicted,
    meanAbsAlpha: abs / N,
    r2oos: 1 - sse / sst,
    r2in: sst1 > 0 ? 1 - sse1 / sst1 : 0,
    sse,
    sst,
    note: options.form === 'uncentred' ? UNCENTRED_NOTE : null,
  };
}

function checkOptions(o: HoldoutOptions): void {
  if (!o || typeof o !== 'object') throw new GmmInputError('invalid-option', 'options are missing.');
  if (!['first', 'second', 'iterated'].includes(o.stage)) throw new GmmInputError('invalid-option', `stage must be first, second or iterated; got '${String(o.stage)}'.`);
  if (!['identity', 'second-moment', 'covariance'].includes(o.weighting))
    throw new GmmInputError('invalid-option', `weighting must be identity, second-moment or covariance; got '${String(o.weighting)}'.`);
  if (!['centred', 'uncentred'].includes(o.form)) throw new GmmInputError('invalid-option', `form must be centred or uncentred; got '${String(o.form)}'.`);
  if (typeof o.factorMeansKnown !== 'boolean') throw new GmmInputError('invalid-option', 'factorMeansKnown must be true or false.');
}

function slice(R: Float64Array, F: Float64Array, N: number, K: number, from: number, to: number): MomentData {
  return momentsFromPacked(R.slice(from * N, to * N), F.slice(from * K, to * K), to - from, N, K);
}

/** The split index from an index or a fraction, checked against T, N and K. */
export function resolveSplit(split: HoldoutSplit, T: number, N: number, K: number): number {
  let s: number;
  if (split && typeof split === 'object' && 'index' in split) {
    s = split.index;
    if (!Number.isInteger(s)) throw new GmmInputError('invalid-option', `The split index must be a whole number of periods; got ${String(s)}.`);
  } else if (split && typeof split === 'object' && 'fraction' in split) {
    const f = split.fraction;
    if (typeof f !== 'number' || !(f > 0 && f < 1)) throw new GmmInputError('invalid-option', `The split fraction must be strictly between 0 and 1; got ${String(f)}.`);
    s = Math.floor(f * T);
  } else throw new GmmInputError('invalid-option', 'Give the split as { index } (number of estimation periods) or { fraction } of T.');
  const need = N + K + 1;
  if (s >= T - 1 || s <= 0)
    throw new GmmInputError(
      'invalid-option',
      `A split at period ${s + 1} of ${T} leaves ${s <= 0 ? 'no estimation periods' : `${Math.max(0, T - s)} hold-out period${T - s === 1 ? '' : 's'}`}: the hold-out check needs periods on both sides of the split (at least ${need} each for N = ${N} assets and K = ${K} factors).`,
    );
  if (s < need || T - s < need)
    throw new GmmInputError(
      'too-few-periods',
      `The split leaves ${s} estimation and ${T - s} hold-out periods; each side needs at least N + K + 1 = ${need} (N = ${N} assets, K = ${K} factors). Choose a split between period ${need} and ${T - need}${T - need < need ? ' — impossible for this sample: use fewer assets or a longer sample' : ''}.`,
    );
  return s;
}

/**
 * Hold-out pricing at one split (see the module comment).
 * @throws GmmInputError for a split that leaves fewer than N + K + 1 periods on either side, a
 *   split at (or after) the last period, malformed data or options, a lag too long for T₁.
 * @returns α₂ per asset, m₂, the prediction, mean |α₂|, R²_oos, R²_in, T₁, T₂; or a typed
 *   singular failure when the estimation-sample system cannot be solved.
 */
export function holdoutPricing(input: HoldoutInput): HoldoutResult | HoldoutFailure {
  if (!input || typeof input !== 'object') throw new GmmInputError('empty-input', 'No input.');
  const { T, N, K } = validateMatrices(input.returns, input.factors, { factorNames: input.factorNames, assetNames: input.assetNames });
  checkOptions(input.options);
  if (input.dates && input.dates.length !== T) throw new GmmInputError('length-mismatch', `dates has ${input.dates.length} labels for ${T} periods.`);
  const s = resolveSplit(input.split, T, N, K);
  const lags = resolveLag(input.options.lags, s);
  const R = fromNested(input.returns, N);
  const F = fromNested(input.factors, K);
  const r = holdoutFromMoments(slice(R, F, N, K, 0, s), slice(R, F, N, K, s, T), { ...input.options, lags });
  if (!r.ok) return r;
  return {
    ...r,
    split: s,
    splitDate: input.dates ? input.dates[s] : null,
    assetNames: input.assetNames ? [...input.assetNames] : Array.from({ length: N }, (_, i) => `asset ${i + 1}`),
    factorNames: [...input.factorNames],
  };
}

export interface RollingHoldoutInput extends Omit<HoldoutInput, 'split'> {
  readonly window: {
    readonly kind?: 'rolling' | 'expanding';
    /** Estimation window length n (rolling) or first window length (expanding). */
    readonly length: number;
    /** Periods between re-estimations, and the length h of each priced block. */
    readonly step: number;
  };
}

interface RollingHoldoutRowValues {
  /** Estimation periods [start, end), priced block [end, blockEnd). */
  readonly start: number;
  readonly end: number;
  readonly blockEnd: number;
  readonly blockStartDate: string | null;
  readonly blockEndDate: string | null;
  readonly b: readonly number[];
  readonly alpha: readonly number[];
  readonly meanAbsAlpha: number | null;
  readonly r2oos: number | null;
  readonly r2in: number | null;
}

/**
 * One priced block: `ok: true` with its numbers, or the library's failure shape (errors.ts:
 * `code` and `message`) with empty b̂, α and null statistics.
 */
export type RollingHoldoutRow = RollingHoldoutRowValues & ({ readonly ok: true } | { readonly ok: false; readonly code: GmmFailureCode; readonly message: string });

export interface RollingHoldoutResult {
  readonly kind: 'rolling' | 'expanding';
  readonly length: number;
  readonly step: number;
  readonly lags: number;
  readonly form: SdfForm;
  readonly note: string | null;
  readonly assetNames: readonly string[];
  readonly factorNames: readonly string[];
  readonly rows: readonly RollingHoldoutRow[];
  /** 1 − Σ α₂'α₂ / Σ m₂'m₂ over the blocks priced (null when none). */
  readonly pooledR2oos: number | null;
  /** Mean of the blocks' mean |α₂| (null when none). */
  readonly meanAbsAlpha: number | null;
}

/**
 * Rolling (or expanding) hold-out pricing: re-estimate on each window, price the next block.
 * @throws GmmInputError for a window shorter than N + K + 1, a step below 2, no block to price,
 *   malformed data or options.
 */
export function rollingHoldout(input: RollingHoldoutInput): RollingHoldoutResult {
  if (!input || typeof input !== 'object') throw new GmmInputError('empty-input', 'No input.');
  const { T, N, K } = validateMatrices(input.returns, input.factors, { factorNames: input.factorNames, assetNames: input.assetNames });
  checkOptions(input.options);
  if (input.dates && input.dates.length !== T) throw new GmmInputError('length-mismatch', `dates has ${input.dates.length} labels for ${T} periods.`);
  const w = input.window;
  const kind = w?.kind ?? 'rolling';
  if (kind !== 'rolling' && kind !== 'expanding') throw new GmmInputError('invalid-option', `window kind must be rolling or expanding; got '${String(kind)}'.`);
  if (!w || !Number.isInteger(w.length) || !Number.isInteger(w.step)) throw new GmmInputError('invalid-option', 'The window length and step must be whole numbers of periods.');
  const need = N + K + 1;
  if (w.length < need)
    throw new GmmInputError('too-few-periods', `A window of ${w.length} periods is too short for N = ${N} assets and K = ${K} factors: use at least ${need}.`);
  if (w.step < 2) throw new GmmInputError('invalid-option', `The step (the length of each priced block) must be at least 2 periods; got ${w.step}.`);
  if (w.length > T - 2)
    throw new GmmInputError('invalid-option', `A window of ${w.length} periods leaves ${Math.max(0, T - w.length)} of T = ${T} to price: the hold-out block needs at least 2.`);
  const lags = resolveLag(input.options.lags, w.length);
  const R = fromNested(input.returns, N);
  const F = fromNested(input.factors, K);
  const rows: RollingHoldoutRow[] = [];
  let sse = 0;
  let sst = 0;
  let absSum = 0;
  let okRows = 0;
  for (let s = 0; ; s += w.step) {
    const start = kind === 'rolling' ? s : 0;
    const end = s + w.length;
    const blockEnd = Math.min(T, end + w.step);
    if (blockEnd - end < 2) break;
    const r = holdoutFromMoments(slice(R, F, N, K, start, end), slice(R, F, N, K, end, blockEnd), { ...input.options, lags });
    const dates = { blockStartDate: input.dates ? input.dates[end] : null, blockEndDate: input.dates ? input.dates[blockEnd - 1] : null };
    if (r.ok) {
      sse += r.sse;
      sst += r.sst;
      absSum += r.meanAbsAlpha;
      okRows += 1;
      rows.push({ start, end, blockEnd, ...dates, ok: true, b: r.b, alpha: r.alpha, meanAbsAlpha: r.meanAbsAlpha, r2oos: r.r2oos, r2in: r.r2in });
    } else rows.push({ start, end, blockEnd, ...dates, ok: false, code: r.code, message: r.message, b: [], alpha: [], meanAbsAlpha: null, r2oos: null, r2in: null });
    if (blockEnd >= T) break;
  }
  return {
    kind,
    length: w.length,
    step: w.step,
    lags,
    form: input.options.form,
    note: input.options.form === 'uncentred' ? UNCENTRED_NOTE : null,
    assetNames: input.assetNames ? [...input.assetNames] : Array.from({ length: N }, (_, i) => `asset ${i + 1}`),
    factorNames: [...input.factorNames],
    rows,
    pooledR2oos: okRows > 0 && sst > 0 ? 1 - sse / sst : null,
    meanAbsAlpha: okRows > 0 ? absSum / okRows : null,
  };
}

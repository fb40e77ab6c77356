/**
 * Rolling and expanding windows: b̂, λ̂ and their t-statistics re-estimated on sub-samples, for a
 * chart per factor with bands b̂ ± z·se (z the two-sided normal quantile at the spec's level).
 *
 * Formula (plain text). Windows are [s, e) in 0-based periods. Rolling: length n, step h:
 * s = 0, h, 2h, … with e = s + n ≤ T. Expanding: s = 0 and e = n, n + h, n + 2h, … ≤ T.
 * On each window the SDF model is estimated exactly as the full run (sdf-gmm: b̂ by GMM at the
 * chosen stage, influence-function SEs; premia: λ̂ = Σ̂_f b̂ with SEs through ψ_λ), with the
 * lag fixed by the user or, for 'auto', floor(4 (n/100)^(2/9)) on each window's own length.
 * Estimating on windows to see whether estimates drift is common practice (e.g. Fama and MacBeth
 * 1973, JPE 81(3), 607–636, estimate on successive sub-periods).
 *
 * Papers: Hansen, L. P. (1982), Econometrica 50(4), 1029–1054; Kan, R., Robotti, C. and
 * Shanken, J. (2013), Journal of Finance 68(6), 2617–2649 (λ and its variance).
 *
 * @example
 * rollingWindows(10, { kind: 'rolling', length: 4, step: 3 }) // → [[0, 4], [3, 7], [6, 10]]
 * rollingWindows(10, { kind: 'expanding', length: 4, step: 3 }) // → [[0, 4], [0, 7], [0, 10]]
 */
import { normalQuantile } from './distributions';
import { GmmInputError, type GmmFailureCode } from './errors';
import { defaultLag, maxLag } from './hac';
import { fromNested } from './linalg';
import { momentsFromPacked } from './moments';
import { fitPremia } from './premia';
import { fitSdfGmm, type FirstStageWeighting, type GmmStage, type SdfForm } from './sdf-gmm';
import { validateMatrices } from './validate';

export interface WindowSpec {
  readonly kind: 'rolling' | 'expanding';
  /** Window length (rolling) or first window length (expanding), in periods. */
  readonly length: number;
  /** Periods between successive windows. */
  readonly step: number;
}

export interface RollingOptions {
  readonly stage: GmmStage;
  readonly weighting: FirstStageWeighting;
  readonly lags: number | 'auto';
  readonly form: SdfForm;
  readonly factorMeansKnown: boolean;
  /** Two-sided level of the bands (default 0.05 → ±1.96 se). */
  readonly level?: number;
}

export interface RollingInput {
  readonly returns: readonly (readonly number[])[];
  readonly factors: readonly (readonly number[])[];
  readonly factorNames: readonly string[];
  /** Optional period labels (T), used for the window end dates. */
  readonly dates?: readonly string[];
  readonly window: WindowSpec;
  readonly options: RollingOptions;
}

interface RollingPointValues {
  readonly start: number;
  readonly end: number;
  readonly startDate: string | null;
  readonly endDate: string | null;
  readonly b: readonly number[];
  readonly seB: readonly number[];
  readonly tB: readonly number[];
  readonly lambda: readonly number[];
  readonly seLambda: readonly number[];
  readonly tLambda: readonly number[];
  readonly J: number;
  readonly pJ: number;
}

/**
 * One window: `ok: true` with its estimates, or the library's failure shape (errors.ts: `code`
 * and `message`) with zeros in the estimates (never NaN).
 */
export type RollingPoint = RollingPointValues & ({ readonly ok: true } | { readonly ok: false; readonly code: GmmFailureCode; readonly message: string });

export interface RollingResult {
  readonly kind: 'rolling' | 'expanding';
  readonly length: number;
  readonly step: number;
  readonly level: number;
  /** z of the bands: normalQuantile(1 − level/2). */
  readonly z: number;
  readonly factorNames: readonly string[];
  readonly points: readonly RollingPoint[];
  readonly failed: number;
}

/** The windows [start, end) for T periods. @throws GmmInputError when no window fits. */
export function rollingWindows(T: number, w: WindowSpec): [number, number][] {
  if (w.kind !== 'rolling' && w.kind !== 'expanding')
    throw new GmmInputError('invalid-option', `window kind must be rolling or expanding; got '${String(w.kind)}'.`);
  if (!Number.isInteger(w.length) || w.length < 2 || w.length > T)
    throw new GmmInputError('invalid-option', `The window length must be an integer from 2 to T = ${T}; got ${String(w.length)}.`);
  if (!Number.isInteger(w.step) || w.step < 1)
    throw new GmmInputError('invalid-option', `The step must be a positive integer; got ${String(w.step)}.`);
  const out: [number, number][] = [];
  if (w.kind === 'rolling') for (let s = 0; s + w.length <= T; s += w.step) out.push([s, s + w.length]);
  else for (let e = w.length; e <= T; e += w.step) out.push([0, e]);
  return out;
}

const z0 = (K: number) => new Array<number>(K).fill(0);

/** Validate; returns T, N, K and the windows. */
export function prepareRolling(input: RollingInput): { T: number; N: number; K: number; windows: [number, number][] } {
  const { T, N, K } = validateMatrices(input.returns, input.factors, { factorNames: input.factorNames });
  const windows = rollingWindows(T, input.window);
  if (input.window.length <= N + K)
    throw new GmmInputError('too-few-periods', `A window of ${input.window.length} periods is too short for N = ${N} assets and K = ${K} factors: need more than ${N + K}.`);
  if (input.dates && input.dates.length !== T) throw new GmmInputError('length-mismatch', `dates has ${input.dates.length} labels for T = ${T} periods.`);
  const level = input.options.level ?? 0.05;
  if (!(level > 0 && level < 1)) throw new GmmInputError('invalid-option', `level must be strictly between 0 and 1; got ${String(level)}.`);
  return { T, N, K, windows };
}

/** Estimate the windows with index in [from, to) of `rollingWindows`. */
export function estimateWindows(input: RollingInput, from: number, to: number): RollingPoint[] {
  const { N, K, windows } = prepareRolling(input);
  const R = fromNested(input.returns, N);
  const F = fromNested(input.factors, K);
  const o = input.options;
  const out: RollingPoint[] = [];
  for (let w = from; w < Math.min(to, windows.length); w++) {
    const [s, e] = windows[w];
    const n = e - s;
    const base = { start: s, end: e, startDate: input.dates?.[s] ?? null, endDate: input.dates?.[e - 1] ?? null };
    // the window's own lag limit (L < n/4, methods contract) caps a fixed lag
    const lags = o.lags === 'auto' ? defaultLag(n) : Math.min(o.lags, maxLag(n));
    const m = momentsFromPacked(R.subarray(s * N, e * N), F.subarray(s * K, e * K), n, N, K);
    let failure: { code: GmmFailureCode; message: string } | null = null;
    for (let k = 0; k < K && !failure; k++) {
      let varies = false;
      for (let t = s + 1; t < e && !varies; t++) varies = F[t * K + k] !== F[s * K + k];
      // a constant factor makes the window's factor covariance singular
      if (!varies) failure = { code: 'singular', message: `factor '${input.factorNames[k]}' is constant in this window` };
    }
    const fit = failure ? null : fitSdfGmm(m, { stage: o.stage, weighting: o.weighting, lags, form: o.form, factorMeansKnown: o.factorMeansKnown });
    if (fit && !fit.ok) failure = { code: fit.code, message: fit.message };
    const prem = fit && fit.ok ? fitPremia(m, fit) : null;
    if (prem && !prem.ok) failure = { code: prem.code, message: prem.message };
    if (failure || !fit || !fit.ok || !prem || !prem.ok) {
      const f = failure ?? { code: 'not-defined' as const, message: 'not estimable' };
      out.push({ ...base, ok: false, code: f.code, message: f.message, b: z0(K), seB: z0(K), tB: z0(K), lambda: z0(K), seLambda: z0(K), tLambda: z0(K), J: 0, pJ: 1 });
      continue;
    }
    const seB = Array.from({ length: K }, (_, k) => Math.sqrt(Math.max(0, fit.covB[k * K + k])));
    const seL = Array.from({ length: K }, (_, k) => Math.sqrt(Math.max(0, prem.covLambda[k * K + k])));
    out.push({
      ...base,
      ok: true,
      b: Array.from(fit.b),
      seB,
      tB: seB.map((se, k) => (se > 0 ? fit.b[k] / se : 0)),
      lambda: Array.from(prem.lambda),
      seLambda: seL,
      tLambda: seL.map((se, k) => (se > 0 ? prem.lambda[k] / se : 0)),
      J: fit.J.stat,
      pJ: fit.J.p,
    });
  }
  return out;
}

/** Assemble points (from any number of chunks, in window order) into the result. */
export function summariseRolling(input: RollingInput, points: readonly RollingPoint[]): RollingResult {
  const level = input.options.level ?? 0.05;
  const sorted = [...points].sort((a, b) => a.end - b.end || a.start - b.start);
  return {
    kind: input.window.kind,
    length: input.window.length,
    step: input.window.step,
    level,
    z: normalQuantile(1 - level / 2),
    factorNames: [...input.factorNames],
    points: sorted,
    failed: sorted.filter((p) => !p.ok).length,
  };
}

/**
 * All windows in one call.
 * @param input returns, factors, names, optional dates, window (kind, length, step), options.
 * @returns one point per window with b̂, λ̂, SEs and t-statistics; failed windows flagged, never NaN.
 * @throws GmmInputError on malformed input or a window that does not fit.
 */
export function rollingEstimates(input: RollingInput): RollingResult {
  const { windows } = prepareRolling(input);
  return summariseRolling(input, estimateWindows(input, 0, windows.length));
}

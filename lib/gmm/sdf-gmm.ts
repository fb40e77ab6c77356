/**
 * GMM estimation of the loadings b of a linear SDF, first, second or iterated stage.
 *
 * Formula (plain text). Centred form (default): m_t = 1 − b'(f_t − μ), moment
 * E[R_t (1 − (f_t − μ)' b)] = 0, pricing errors g(b) = E_T[R] − C b, C = Cov_T(R, f).
 * Uncentred form: m_t = 1 − b' f_t, g(b) = E_T[R] − D b, D = E_T[R f'].
 * For a weighting W: b̂ = (X'WX)^{-1} X'W E_T[R] with X = C or D; α̂ = g(b̂).
 *   first stage: W = I, W = (E_T[R R'])^{-1} (second-moment weighting) or W = (Cov_T(R))^{-1}
 *   (covariance weighting, Kan and Robotti 2008);
 *   second stage: W = Ŝ^{-1}, Ŝ = HAC long-run covariance of h_t at the first-stage b̂;
 *   iterated: repeat until max_k |Δb̂_k| ≤ 1e-10 · max(1e-300, max_k |b̂_k|) (relative, so the
 *   stop does not depend on the units of the data; at most 100 steps).
 * Exactly identified (N = K): b̂ = X^{-1} E_T[R], and α̂, Var(α̂) and J are reported as exact zeros.
 * Moment series: h_t = R_t (1 − (f_t − μ)'b) + E_T[R] b'(f_t − μ) (the factor-mean correction);
 * with factorMeansKnown e_t = R_t (1 − (f_t − μ)'b); uncentred h_t = R_t (1 − f_t'b).
 * Standard errors: H = (X'WX)^{-1} X'W, ψ_b,t = H h_t, Var(b̂) = (1/T) LRV(ψ_b) = H Ŝ_b H' / T
 * with Ŝ_b the HAC of h_t at the reported b̂ (same lag); Var(α̂) = (1/T)(I − XH) Ŝ_b (I − XH)'.
 * J: second stage (and iterated) T α̂' Ŝ^{-1} α̂ with the Ŝ used as weighting, χ²(N − K);
 * first stage α̂' Var(α̂)^+ α̂ with the rank N − K Moore–Penrose inverse, χ²(N − K).
 *
 * Papers: Hansen, L. P. (1982), "Large Sample Properties of Generalized Method of Moments
 * Estimators", Econometrica 50(4), 1029–1054. Hansen, L. P. and Jagannathan, R. (1997),
 * "Assessing Specification Errors in Stochastic Discount Factor Models", Journal of Finance
 * 52(2), 557–590. Kan, R. and Robotti, C. (2008), "Specification Tests of Asset Pricing Models
 * Using Excess Returns", Journal of Empirical Finance 15(5), 816–838. Kan, R., Robotti, C. and
 * Shanken, J. (2013), "Pricing Model Performance and the Two-Pass Cross-Sectional Regression
 * Methodology", Journal of Finance 68(6), 2617–2649.
 *
 * @example
 * // Exactly identified (N = K = 1): the pricing error is zero and so is J.
 * const r = estimateSdfGmm({ returns: [[0.02], [0.01], [0.04], [0.03]], factors: [[0.01], [0.0], [0.03], [0.02]],
 *   options: { stage: 'second', lags: 0 } });
 * // r.ok === true, r.J.stat === 0, r.J.df === 0
 */
import { chiSquareSf } from './distributions';
import type { GmmFailure } from './errors';
import { validateMatrices } from './validate';
import { hacFromColumnRanges } from './hac';
import {
  cholesky,
  choleskyInverse,
  choleskySolve,
  matMul,
  matTMul,
  pinvSymmetricRank,
  quadForm,
  toNested,
} from './linalg';
import { covarianceFromSecondMoment, prepareMoments, secondMomentMatrix, type ColumnMoments, type MomentData } from './moments';

export type GmmStage = 'first' | 'second' | 'iterated';
export type FirstStageWeighting = 'identity' | 'second-moment' | 'covariance';
export type SdfForm = 'centred' | 'uncentred';

export interface SdfGmmOptions {
  readonly stage: GmmStage;
  /** First-stage weighting: I_N (default), (E_T[R R'])^{-1}, or (Cov_T(R))^{-1} (Kan and Robotti 2008). */
  readonly weighting?: FirstStageWeighting;
  /** Bartlett lag for every HAC estimate (integer ≥ 0). */
  readonly lags: number;
  readonly form?: SdfForm;
  /** Use e_t = R_t(1 − (f_t − μ)'b) (no factor-mean correction). Centred form only. */
  readonly factorMeansKnown?: boolean;
  readonly maxIterations?: number;
  /** Relative stop of the iterated stage: max |Δb_k| ≤ tolerance · max(1e-300, max |b_k|) (default 1e-10). */
  readonly tolerance?: number;
  /** Precomputed E_T[R R'] (N×N), reused when given. */
  readonly secondMoment?: Float64Array;
}

export interface ChiSquareTest {
  readonly stat: number;
  readonly df: number;
  readonly p: number;
}

/** A fitted SDF model on typed arrays (for reuse by later computations). */
export interface SdfGmmFit {
  readonly ok: true;
  readonly stage: GmmStage;
  /** The first-stage weighting (the reported b̂'s weighting when stage is 'first'). */
  readonly weighting: FirstStageWeighting;
  readonly form: SdfForm;
  readonly factorMeansKnown: boolean;
  readonly lags: number;
  /** Weighting-matrix updates: 0 first stage, 1 second stage, n iterated. */
  readonly iterations: number;
  readonly converged: boolean;
  readonly N: number;
  readonly K: number;
  readonly T: number;
  /** First-stage b̂ (always computed). */
  readonly bFirst: Float64Array;
  readonly b: Float64Array;
  /** X = C (centred) or D (uncentred), N×K. */
  readonly X: Float64Array;
  /** Weighting matrix used for the reported b̂ (N×N). */
  readonly W: Float64Array;
  /** Ŝ whose inverse is W (null at the first stage). */
  readonly weightingS: Float64Array | null;
  /** H = (X'WX)^{-1} X'W (K×N). */
  readonly H: Float64Array;
  readonly alpha: Float64Array;
  /** HAC of h_t at the reported b̂ (N×N). */
  readonly Sb: Float64Array;
  readonly covB: Float64Array;
  readonly covAlpha: Float64Array;
  readonly J: ChiSquareTest;
}

/** The typed numerical failure of the fit (errors.ts): code 'singular' and the matrix that could not be inverted. */
export type SdfGmmFailure = GmmFailure & { readonly matrix: string };

/** h_t(b) for the chosen form (T×N row-major). */
export function sdfMomentSeries(m: MomentData, b: ArrayLike<number>, form: SdfForm, factorMeansKnown: boolean): Float64Array {
  const { T, N, K, R, F, Fc, meanR } = m;
  const h = new Float64Array(T * N);
  for (let t = 0; t < T; t++) {
    let s = 0;
    const fr = t * K;
    if (form === 'uncentred') for (let k = 0; k < K; k++) s += F[fr + k] * b[k];
    else for (let k = 0; k < K; k++) s += Fc[fr + k] * b[k];
    const row = t * N;
    if (form === 'centred' && !factorMeansKnown) {
      // R_t (1 − s) + E[R] s  =  R_t − (R_t − E[R]) s
      for (let i = 0; i < N; i++) h[row + i] = R[row + i] - (R[row + i] - meanR[i]) * s;
    } else {
      const w = 1 - s;
      for (let i = 0; i < N; i++) h[row + i] = R[row + i] * w;
    }
  }
  return h;
}

/** s_t = (f_t − μ)'b (centred) or f_t'b (uncentred), length T. */
export function sdfIndex(m: ColumnMoments, b: ArrayLike<number>, form: SdfForm): Float64Array {
  const { T, K, F, Fc } = m;
  const X = form === 'uncentred' ? F : Fc;
  const s = new Float64Array(T);
  for (let t = 0; t < T; t++) {
    let v = 0;
    const fr = t * K;
    for (let k = 0; k < K; k++) v += X[fr + k] * b[k];
    s[t] = v;
  }
  return s;
}

/** Writes periods [t0, t1) of column i of a T×p series into buf[0 .. t1 − t0). */
export type ColumnRangeFill = (i: number, t0: number, t1: number, buf: Float64Array) => void;

/**
 * Column i of h_t(b) minus c_i (c null: nothing subtracted), periods [t0, t1) into buf, from the
 * column-major returns and the index s = sdfIndex(m, b, form): the same arithmetic, element by
 * element, as {@link sdfMomentSeries}.
 */
export function sdfMomentColumns(
  m: ColumnMoments,
  s: Float64Array,
  form: SdfForm,
  factorMeansKnown: boolean,
  c: Float64Array | null = null,
): ColumnRangeFill {
  const { T, meanR } = m;
  const Rc = m.Rcols;
  const corrected = form === 'centred' && !factorMeansKnown;
  // (h − c_i) rounds h first, as a subtraction from the stored series would; c null subtracts 0
  return (i, t0, t1, buf) => {
    const off = i * T;
    const ci = c ? c[i] : 0;
    if (corrected) {
      const mi = meanR[i];
      for (let t = t0; t < t1; t++) {
        const r = Rc[off + t];
        buf[t - t0] = r - (r - mi) * s[t] - ci;
      }
    } else for (let t = t0; t < t1; t++) buf[t - t0] = Rc[off + t] * (1 - s[t]) - ci;
  };
}

/**
 * HAC long-run covariance Ŝ(b) of the SDF moment series h_t(b) (N×N), generated column by
 * column from the column-major returns (no T×N intermediate).
 */
export function sdfLongRunCovariance(m: ColumnMoments, b: ArrayLike<number>, form: SdfForm, factorMeansKnown: boolean, lags: number): Float64Array {
  return hacFromColumnRanges(m.T, m.N, lags, sdfMomentColumns(m, sdfIndex(m, b, form), form, factorMeansKnown));
}

interface WeightedSolution {
  b: Float64Array;
  H: Float64Array;
}

/** b̂ = (X'WX)^{-1} X'W E[R], H = (X'WX)^{-1} X'W; null if X'WX is singular. */
function weightedSolve(X: Float64Array, W: Float64Array, meanR: Float64Array, N: number, K: number): WeightedSolution | null {
  const WX = matMul(W, N, N, X, K); // N×K (W symmetric, so (X'W)' = WX)
  const A = matTMul(X, N, K, WX, K); // K×K
  const L = cholesky(A, K);
  if (!L) return null;
  const WXt = new Float64Array(K * N);
  for (let i = 0; i < N; i++) for (let k = 0; k < K; k++) WXt[k * N + i] = WX[i * K + k];
  const H = choleskySolve(L, K, WXt, N); // K×N
  const b = new Float64Array(K);
  for (let k = 0; k < K; k++) {
    let s = 0;
    for (let i = 0; i < N; i++) s += H[k * N + i] * meanR[i];
    b[k] = s;
  }
  return { b, H };
}

function pricingErrors(X: Float64Array, b: Float64Array, meanR: Float64Array, N: number, K: number): Float64Array {
  const a = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    let s = meanR[i];
    for (let k = 0; k < K; k++) s -= X[i * K + k] * b[k];
    a[i] = s;
  }
  return a;
}

/**
 * Fit the SDF model on precomputed moments. See the module comment for formulas and papers.
 * @param m moments from prepareMoments / momentsFromPacked (or selectFactors for a subset).
 * @param options stage, first-stage weighting, lag, form, factorMeansKnown, iteration cap and
 *   tolerance, optional precomputed E_T[RR'].
 * @returns the fit on typed arrays (b̂, W, H, α̂, Ŝ_b, Var(b̂), Var(α̂), J, iterations,
 *   converged), or `{ ok: false, code: 'singular', matrix, message }` when X'WX, E[RR'] or Ŝ cannot be
 *   inverted. Never NaN; does not throw for numerical failures.
 */
export function fitSdfGmm(m: MomentData, options: SdfGmmOptions): SdfGmmFit | SdfGmmFailure {
  const { T, N, K, meanR } = m;
  const form = options.form ?? 'centred';
  const meansKnown = form === 'centred' && (options.factorMeansKnown ?? false);
  const lags = options.lags;
  const maxIt = options.maxIterations ?? 100;
  const tol = options.tolerance ?? 1e-10;
  const X = form === 'centred' ? m.covRF : m.crossRF;
  const fail = (matrix: string, message: string): SdfGmmFailure => ({ ok: false, code: 'singular', matrix, message });

  let W1: Float64Array;
  const weighting = options.weighting ?? 'identity';
  if (weighting === 'second-moment') {
    const E = options.secondMoment ?? secondMomentMatrix(m.R, T, N, m.Rcols);
    const L = cholesky(E, N);
    if (!L) return fail('E[RR\']', 'The second-moment matrix of the returns is singular; second-moment weighting is impossible.');
    W1 = choleskyInverse(L, N);
  } else if (weighting === 'covariance') {
    const E = options.secondMoment ?? secondMomentMatrix(m.R, T, N, m.Rcols);
    const L = cholesky(covarianceFromSecondMoment(E, meanR), N);
    if (!L) return fail('Cov(R)', 'The covariance matrix of the returns is singular; covariance weighting is impossible.');
    W1 = choleskyInverse(L, N);
  } else {
    W1 = new Float64Array(N * N);
    for (let i = 0; i < N; i++) W1[i * N + i] = 1;
  }
  const first = weightedSolve(X, W1, meanR, N, K);
  if (!first) return fail("X'WX", 'The first-stage system is singular (a factor has no covariance with the test assets?).');

  let b = first.b;
  let H = first.H;
  let W = W1;
  let weightingS: Float64Array | null = null;
  let iterations = 0;
  let converged = true;

  if (options.stage !== 'first') {
    const cap = options.stage === 'iterated' ? maxIt : 1;
    converged = options.stage !== 'iterated';
    for (let it = 1; it <= cap; it++) {
      const S = sdfLongRunCovariance(m, b, form, meansKnown, lags);
      const L = cholesky(S, N);
      if (!L) return fail('S', 'The long-run covariance Ŝ of the moment series is singular; the second stage is impossible.');
      const Wn = choleskyInverse(L, N);
      const sol = weightedSolve(X, Wn, meanR, N, K);
      if (!sol) return fail("X'Ŝ⁻¹X", 'The second-stage system is singular.');
      let move = 0;
      let size = 0;
      for (let k = 0; k < K; k++) {
        move = Math.max(move, Math.abs(sol.b[k] - b[k]));
        size = Math.max(size, Math.abs(sol.b[k]));
      }
      b = sol.b;
      H = sol.H;
      W = Wn;
      weightingS = S;
      iterations = it;
      if (options.stage === 'iterated' && move <= tol * Math.max(1e-300, size)) {
        converged = true;
        break;
      }
    }
  }

  // Exactly identified: E_T[R] = X b̂ holds exactly, so the pricing errors are zero (not rounding noise).
  const exact = N === K;
  const alpha = exact ? new Float64Array(N) : pricingErrors(X, b, meanR, N, K);
  const Sb = sdfLongRunCovariance(m, b, form, meansKnown, lags);
  // Var(b̂) = H Ŝ_b H' / T
  const HS = matMul(H, K, N, Sb, N); // K×N
  const covB = new Float64Array(K * K);
  for (let a = 0; a < K; a++)
    for (let c = 0; c < K; c++) {
      let s = 0;
      for (let i = 0; i < N; i++) s += HS[a * N + i] * H[c * N + i];
      covB[a * K + c] = s / T;
    }
  // Var(α̂) = M Ŝ_b M' / T with M = I − X H, expanded so that no N×N×N product is needed:
  // M S M' = S − X (H S) − (H S)' X' + X (H S H') X'
  const XHS = matMul(X, N, K, HS, N); // N×N
  const HSHt = new Float64Array(K * K);
  for (let a = 0; a < K; a++) for (let c = 0; c < K; c++) HSHt[a * K + c] = covB[a * K + c] * T;
  const XHSH = matMul(X, N, K, HSHt, K); // N×K
  const covAlpha = new Float64Array(N * N);
  for (let i = 0; i < N && !exact; i++)
    for (let j = i; j < N; j++) {
      let q = 0;
      for (let k = 0; k < K; k++) q += XHSH[i * K + k] * X[j * K + k];
      const v = (Sb[i * N + j] - XHS[i * N + j] - XHS[j * N + i] + q) / T;
      covAlpha[i * N + j] = v;
      covAlpha[j * N + i] = v;
    }

  const df = N - K;
  let Jstat: number;
  if (options.stage === 'first') {
    const P = pinvSymmetricRank(covAlpha, N, df);
    Jstat = P ? quadForm(P, N, alpha) : 0;
    if (!P && df > 0) return fail('Var(α̂)', 'The covariance of the first-stage pricing errors has rank below N − K.');
  } else {
    Jstat = T * quadForm(W, N, alpha);
  }
  if (df === 0 || !(Jstat > 0)) Jstat = df === 0 ? 0 : Math.max(0, Jstat);
  const J: ChiSquareTest = { stat: Jstat, df, p: chiSquareSf(Jstat, df) };

  return {
    ok: true,
    stage: options.stage,
    weighting,
    form,
    factorMeansKnown: meansKnown,
    lags,
    iterations,
    converged,
    N,
    K,
    T,
    bFirst: first.b,
    b,
    X,
    W,
    weightingS,
    H,
    alpha,
    Sb,
    covB,
    covAlpha,
    J,
  };
}

/** Plain-array input of {@link estimateSdfGmm}. */
export interface SdfGmmInput {
  /** T×N excess returns (decimals). */
  readonly returns: readonly (readonly number[])[];
  /** T×K factors. */
  readonly factors: readonly (readonly number[])[];
  readonly options: SdfGmmOptions;
}

/** Plain, JSON-serialisable result of {@link estimateSdfGmm}. */
export interface SdfGmmResult {
  readonly ok: true;
  readonly stage: GmmStage;
  readonly form: SdfForm;
  readonly iterations: number;
  readonly converged: boolean;
  readonly b: readonly number[];
  readonly seB: readonly number[];
  readonly covB: readonly (readonly number[])[];
  readonly bFirstStage: readonly number[];
  readonly alpha: readonly number[];
  readonly seAlpha: readonly number[];
  readonly J: ChiSquareTest;
}

/**
 * SDF GMM on plain arrays (validated). See the module comment for the formulas.
 * @param input returns T×N, factors T×K, options (stage, weighting, lags, form, factorMeansKnown).
 * @returns b̂ with influence-function SEs, pricing errors with SEs, J; or a typed singular failure.
 * @throws GmmInputError on malformed input (see validateMatrices).
 * @example
 * estimateSdfGmm({ returns: [[0.02], [0.01], [0.04], [0.03]], factors: [[0.01], [0], [0.03], [0.02]],
 *   options: { stage: 'second', lags: 0 } }).J // → { stat: 0, df: 0, p: 1 }
 */
export function estimateSdfGmm(input: SdfGmmInput): SdfGmmResult | SdfGmmFailure {
  validateMatrices(input.returns, input.factors);
  const m = prepareMoments(input.returns, input.factors);
  const fit = fitSdfGmm(m, input.options);
  if (!fit.ok) return fit;
  const { K, N } = fit;
  return {
    ok: true,
    stage: fit.stage,
    form: fit.form,
    iterations: fit.iterations,
    converged: fit.converged,
    b: Array.from(fit.b),
    seB: Array.from({ length: K }, (_, k) => Math.sqrt(Math.max(0, fit.covB[k * K + k]))),
    covB: toNested(fit.covB, K, K),
    bFirstStage: Array.from(fit.bFirst),
    alpha: Array.from(fit.alpha),
    seAlpha: Array.from({ length: N }, (_, i) => Math.sqrt(Math.max(0, fit.covAlpha[i * N + i]))),
    J: fit.J,
  };
}

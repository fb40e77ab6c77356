/**
 * Spanning check: is a traded factor's premium explained by the other factors?
 *
 * Formula (plain text): OLS f_k,t = a + β' f_{−k,t} + ε_t (f_{−k} the other factors of the
 * model); a is the mean of f_k orthogonalised against the others. With x_t = f_{−k,t},
 * μ_x = E_T[x], Σ_x = Cov_T(x), the intercept's influence series is
 *   ψ_t = (1 − μ_x' Σ_x^{-1} (x_t − μ_x)) ε̂_t,   Var(â) = (1/T) LRV(ψ)   (Bartlett HAC, same lag),
 * identical to the HAC sandwich (X'X)^{-1}(Σ x ε ε x')(X'X)^{-1} without small-sample correction.
 * Single factor: z = â/se, two-sided normal p-value. A set S: regress each factor in S on the
 * factors outside S (common regressors), stack the intercepts, W = â' Var(â)^{-1} â ~ χ²(|S|).
 * Traded factors only (the intercept is an excess return only when f_k is one).
 * Paper: Huberman, G. and Kandel, S. (1987), "Mean-Variance Spanning", Journal of Finance 42(4),
 * 873–888.
 *
 * @example
 * // B = 0.5·A + 0.01 + noise (sd 0.005), T = 2000: B's spanning alpha is ≈ 0.01 and significant.
 * spanningTest({ factors, factorNames: ['A', 'B'], traded: [true, true], lags: 0, test: ['B'] })
 * // → { alpha ≈ 0.01 (± 3·0.005/√2000), se ≈ 0.005/√2000, t ≈ 89, p ≈ 0 }
 */
import { chiSquareSf } from './distributions';
import { gmmFailure, type GmmFailure, GmmInputError, type GmmResult, okValue } from './errors';
import { hacCovariance } from './hac';
import { cholesky, choleskySolve, fromNested, spdInverse } from './linalg';
import { momentsFromPacked, type MomentData } from './moments';
import { waldSingle, type ZTest } from './wald';

export interface SpanningSingle {
  readonly alpha: number;
  readonly se: number;
  readonly t: number;
  readonly p: number;
}

export interface SpanningJoint {
  readonly factors: readonly string[];
  readonly alpha: readonly number[];
  readonly stat: number;
  readonly df: number;
  readonly p: number;
}

/** The typed numerical failure of this module (the library's one failure shape, errors.ts). */
export type SpanningFailure = GmmFailure;

const collinear = (): GmmFailure => gmmFailure('singular', 'The other factors are collinear.');

/**
 * Spanning intercepts for the factor indices `set` regressed on the other factors, on
 * precomputed moments. Returns the intercepts and their HAC covariance (|S|×|S|), or a typed
 * 'singular' failure when the regressors' covariance is singular.
 */
export function spanningCore(m: MomentData, set: readonly number[], lags: number): GmmResult<{ alpha: Float64Array; cov: Float64Array }> {
  const { T, K, Fc, meanF, sigmaF } = m;
  const s = set.length;
  const others = Array.from({ length: K }, (_, k) => k).filter((k) => !set.includes(k));
  const q = others.length;
  // β (q×s) = Σ_xx^{-1} Σ_xy
  let beta: Float64Array = new Float64Array(0);
  let gamma: Float64Array = new Float64Array(0);
  if (q > 0) {
    const Sxx = new Float64Array(q * q);
    const Sxy = new Float64Array(q * s);
    for (let a = 0; a < q; a++) {
      for (let c = 0; c < q; c++) Sxx[a * q + c] = sigmaF[others[a] * K + others[c]];
      for (let c = 0; c < s; c++) Sxy[a * s + c] = sigmaF[others[a] * K + set[c]];
    }
    const L = cholesky(Sxx, q);
    if (!L) return collinear();
    beta = choleskySolve(L, q, Sxy, s);
    // γ = Σ_xx^{-1} μ_x for the influence weights
    gamma = choleskySolve(L, q, Float64Array.from(others, (k) => meanF[k]), 1);
  }
  const alpha = new Float64Array(s);
  for (let c = 0; c < s; c++) {
    let v = meanF[set[c]];
    for (let a = 0; a < q; a++) v -= beta[a * s + c] * meanF[others[a]];
    alpha[c] = v;
  }
  const psi = new Float64Array(T * s);
  for (let t = 0; t < T; t++) {
    const row = t * K;
    let wgt = 1;
    for (let a = 0; a < q; a++) wgt -= gamma[a] * Fc[row + others[a]];
    for (let c = 0; c < s; c++) {
      let e = Fc[row + set[c]];
      for (let a = 0; a < q; a++) e -= beta[a * s + c] * Fc[row + others[a]];
      psi[t * s + c] = wgt * e;
    }
  }
  const cov = hacCovariance(psi, T, s, lags);
  for (let i = 0; i < cov.length; i++) cov[i] /= T;
  return { ok: true, alpha, cov };
}

/** spanningTest's single result keeps its plain shape (no ok field). */
const okOrFail = (r: GmmResult<SpanningSingle>): SpanningSingle | GmmFailure => (r.ok ? okValue(r)! : r);

/** Single-factor spanning check on precomputed moments (typed 'singular' failure when the other factors are collinear). */
export function spanningSingle(m: MomentData, k: number, lags: number): GmmResult<SpanningSingle> {
  const core = spanningCore(m, [k], lags);
  if (!core.ok) return core;
  const z: ZTest = waldSingle(core.alpha[0], Math.sqrt(Math.max(0, core.cov[0])));
  return { ok: true, alpha: core.alpha[0], se: z.se, t: z.t, p: z.p };
}

/** Joint spanning check for the set on precomputed moments (typed 'singular' failure when singular). */
export function spanningJointCore(m: MomentData, set: readonly number[], lags: number): GmmResult<{ alpha: number[]; stat: number; df: number; p: number }> {
  const core = spanningCore(m, set, lags);
  if (!core.ok) return core;
  const s = set.length;
  const Vi = spdInverse(core.cov, s);
  if (!Vi) return gmmFailure('singular', 'The covariance of the spanning intercepts is singular.');
  let stat = 0;
  for (let a = 0; a < s; a++) for (let c = 0; c < s; c++) stat += core.alpha[a] * Vi[a * s + c] * core.alpha[c];
  stat = Math.max(0, stat);
  return { ok: true, alpha: Array.from(core.alpha), stat, df: s, p: chiSquareSf(stat, s) };
}

export interface SpanningTestInput {
  /** T×K factors. */
  readonly factors: readonly (readonly number[])[];
  readonly factorNames: readonly string[];
  readonly traded: readonly boolean[];
  readonly lags: number;
  /** Names of the factors to test: one name gives the single test, more the joint test. */
  readonly test: readonly string[];
}

/**
 * Spanning check on plain arrays.
 * @throws GmmInputError 'not-traded' when a tested factor is not traded, 'unknown-factor' for a
 *   name not in factorNames.
 * @returns the single result (one name) or the joint result, or a typed singular failure.
 */
export function spanningTest(input: SpanningTestInput): SpanningSingle | SpanningJoint | SpanningFailure {
  const K = input.factorNames.length;
  const idx = input.test.map((name) => {
    const k = input.factorNames.indexOf(name);
    if (k < 0) throw new GmmInputError('unknown-factor', `There is no factor named '${name}'.`, { series: name });
    if (!input.traded[k])
      throw new GmmInputError('not-traded', `The factor '${name}' is not traded; the spanning check applies to traded factors only.`, { series: name });
    return k;
  });
  if (idx.length === 0) throw new GmmInputError('invalid-option', 'Name at least one factor to test.');
  const T = input.factors.length;
  const F = fromNested(input.factors, K);
  const m = momentsFromPacked(new Float64Array(T), F, T, 1, K);
  if (idx.length === 1) return okOrFail(spanningSingle(m, idx[0], input.lags));
  const j = spanningJointCore(m, idx, input.lags);
  return j.ok ? { factors: [...input.test], ...okValue(j)! } : j;
}

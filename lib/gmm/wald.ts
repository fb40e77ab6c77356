/**
 * Wald tests on the SDF loadings b ("is the factor needed?").
 *
 * Formula (plain text): single factor t_k = b̂_k / se(b̂_k), two-sided standard normal p-value;
 * a set S: W = b̂_S' Var(b̂)_SS^{-1} b̂_S ~ χ²(|S|).
 * Paper: Wald, A. (1943), "Tests of Statistical Hypotheses Concerning Several Parameters When
 * the Number of Observations Is Large", Transactions of the American Mathematical Society 54(3),
 * 426–482; applied to SDF loadings as in Jagannathan and Wang (2002, Journal of Finance).
 *
 * @example
 * waldSingle(0.5, 0.25) // → { estimate: 0.5, se: 0.25, t: 2, p: 0.0455 (to 4 d.p.) }
 * waldJoint([1, 0], [[1, 0], [0, 4]], 2, [0]) // → { ok: true, stat: 1, df: 1, p: 0.3173 (to 4 d.p.) }
 */
import { chiSquareSf, normalTwoSidedP } from './distributions';
import { gmmFailure, type GmmResult } from './errors';
import { spdInverse, subMatrix } from './linalg';

export interface ZTest {
  readonly estimate: number;
  readonly se: number;
  readonly t: number;
  readonly p: number;
}

export interface WaldTest {
  readonly stat: number;
  readonly df: number;
  readonly p: number;
}

/** t = estimate / se with a two-sided normal p-value; se = 0 gives t = 0, p = 1 (never NaN). */
export function waldSingle(estimate: number, se: number): ZTest {
  if (!(se > 0) || !Number.isFinite(se)) return { estimate, se: Math.max(0, se || 0), t: 0, p: 1 };
  const t = estimate / se;
  return { estimate, se, t, p: normalTwoSidedP(t) };
}

/**
 * Joint Wald statistic for the coefficients `idx` of `estimate` with covariance `cov` (k×k,
 * row-major or nested). A singular Var_SS comes back as a typed 'singular' failure.
 */
export function waldJoint(
  estimate: ArrayLike<number>,
  cov: ArrayLike<number> | readonly (readonly number[])[],
  k: number,
  idx: readonly number[] = Array.from({ length: k }, (_, i) => i),
): GmmResult<WaldTest> {
  const flat = Array.isArray(cov) && Array.isArray(cov[0]) ? Float64Array.from((cov as number[][]).flat()) : Float64Array.from(cov as ArrayLike<number>);
  const V = subMatrix(flat, k, idx, idx);
  const s = idx.length;
  const Vi = spdInverse(V, s);
  if (!Vi) return gmmFailure('singular', 'Var(b̂) of the tested loadings is singular.', 'Var(b)');
  let stat = 0;
  for (let a = 0; a < s; a++) for (let c = 0; c < s; c++) stat += estimate[idx[a]] * Vi[a * s + c] * estimate[idx[c]];
  stat = Math.max(0, stat);
  return { ok: true, stat, df: s, p: chiSquareSf(stat, s) };
}

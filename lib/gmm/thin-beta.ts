/**
 * Thin-beta flag (weak-factor warning): are the covariances of the test assets with factor k
 * jointly indistinguishable from zero?
 *
 * Formula (plain text): C_k = Cov_T(R, f_k) (N-vector). Its variance is taken under the null
 * C_k = 0 (methods contract, "Long-run covariance"): the series is
 *   z_t = (R_t − E_T[R]) (f_k,t − μ_k)   (no subtraction of the sample covariance Ĉ_k),
 *   Var(Ĉ_k) = (1/T) LRV(z)   (Bartlett HAC, same lag, not demeaned);
 * W_k = Ĉ_k' Var(Ĉ_k)^{-1} Ĉ_k ~ χ²(N). Under the null E[z_t] = 0, so subtracting Ĉ_k changes
 * nothing asymptotically; in a sample it would inflate the statistic (with L = 0, by
 * Sherman–Morrison, W_subtracted = W_null / (1 − W_null/T)), so the null form is used. The factor is flagged when the test does not reject at
 * 10% (p ≥ 0.10): its b and λ inference is then unreliable.
 * Paper: Kan, R. and Zhang, C. (1999), "Two-Pass Tests of Asset Pricing Models with Useless
 * Factors", Journal of Finance 54(1), 203–235.
 *
 * @example
 * // Returns loading on factor 0 only, factor 1 drawn independently (T = 500, N = 5):
 * // thinBetaTest(m, 0, 0).flag === false (p ≈ 0); thinBetaTest(m, 1, 0).flag === true for
 * // about 90% of seeds (p uniform under the null)
 */
import { gmmFailure, type GmmResult } from './errors';
import { chiSquareSf } from './distributions';
import { hacFromColumns } from './hac';
import { cholesky, choleskySolve } from './linalg';
import type { MomentData } from './moments';

/** Level at which the thin-beta test must reject for the factor not to be flagged. */
export const THIN_BETA_LEVEL = 0.1;

export interface ThinBetaTest {
  readonly stat: number;
  readonly df: number;
  readonly p: number;
  /** true: betas jointly indistinguishable from zero at 10%. */
  readonly flag: boolean;
}

/**
 * The thin-beta test for factor k on precomputed moments.
 * @param m moments; @param k factor index (0-based); @param lags Bartlett lag.
 * @returns `{ ok: true, stat, df = N, p, flag = p ≥ 0.10 }`, or a typed 'singular' failure when Var(Ĉ_k) is singular.
 */
export function thinBetaTest(m: MomentData, k: number, lags: number): GmmResult<ThinBetaTest> {
  const { T, N, K, Fc, meanR, covRF } = m;
  const Rc = m.Rcols;
  const f = new Float64Array(T);
  for (let t = 0; t < T; t++) f[t] = Fc[t * K + k];
  // z_i,t = (R_i,t − E[R_i]) (f_k,t − μ_k) under the null C_k = 0, generated column by column
  const V = hacFromColumns(T, N, lags, (i, buf) => {
    const off = i * T;
    const mi = meanR[i];
    for (let t = 0; t < T; t++) buf[t] = (Rc[off + t] - mi) * f[t];
  });
  const L = cholesky(V, N);
  if (!L) return gmmFailure('singular', 'The covariance of the estimated covariances Ĉ_k is singular.', 'Var(Ĉ_k)');
  const c = Float64Array.from({ length: N }, (_, i) => covRF[i * K + k]);
  const x = choleskySolve(L, N, c, 1);
  let stat = 0;
  for (let i = 0; i < N; i++) stat += c[i] * x[i];
  stat = Math.max(0, stat * T);
  const p = chiSquareSf(stat, N);
  return { ok: true, stat, df: N, p, flag: p >= THIN_BETA_LEVEL };
}

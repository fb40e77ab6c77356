/**
 * Hansen–Jagannathan distance.
 *
 * Formula (plain text): at the second-moment-weighted first stage, W = (E_T[R R'])^{-1},
 * b̂ = (X'WX)^{-1} X'W E_T[R], α̂ = E_T[R] − X b̂, HJ = sqrt(α̂' W α̂) (X = C centred, D uncentred).
 * Paper: Hansen, L. P. and Jagannathan, R. (1997), "Assessing Specification Errors in Stochastic
 * Discount Factor Models", Journal of Finance 52(2), 557–590.
 *
 * @example
 * // Exactly identified (N = K): α̂ = 0, so HJ = 0.
 */
import { gmmFailure, type GmmResult } from './errors';
import { cholesky, choleskySolve } from './linalg';
import type { MomentData } from './moments';

/**
 * HJ distance from moments and a precomputed E_T[RR'].
 * @param form 'centred' uses X = C, 'uncentred' X = D.
 * @returns `{ ok: true, distance }` (≥ 0), or a typed 'singular' failure when E[RR'] or X'WX is singular.
 */
export function hjDistance(m: MomentData, secondMoment: Float64Array, form: 'centred' | 'uncentred' = 'centred'): GmmResult<{ readonly distance: number }> {
  const { N, K, meanR } = m;
  const X = form === 'centred' ? m.covRF : m.crossRF;
  const Le = cholesky(secondMoment, N);
  if (!Le) return gmmFailure('singular', 'The second-moment matrix of the returns is singular.', "E[RR']");
  // exactly identified: every weighting prices the assets exactly (α̂ = 0, as in sdf-gmm)
  if (N === K) return { ok: true, distance: 0 };
  const WX = choleskySolve(Le, N, X, K); // N×K
  const A = new Float64Array(K * K);
  const rhs = new Float64Array(K);
  for (let a = 0; a < K; a++) {
    for (let c = 0; c < K; c++) {
      let s = 0;
      for (let i = 0; i < N; i++) s += X[i * K + a] * WX[i * K + c];
      A[a * K + c] = s;
    }
    let s = 0;
    for (let i = 0; i < N; i++) s += WX[i * K + a] * meanR[i];
    rhs[a] = s;
  }
  const La = cholesky(A, K);
  if (!La) return gmmFailure('singular', "The second-moment-weighted system X'WX is singular.", "X'WX");
  const b = choleskySolve(La, K, rhs, 1);
  const alpha = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    let s = meanR[i];
    for (let k = 0; k < K; k++) s -= X[i * K + k] * b[k];
    alpha[i] = s;
  }
  // α' E[RR']⁻¹ α through the factor: no explicit inverse
  const Wa = choleskySolve(Le, N, alpha, 1);
  let q = 0;
  for (let i = 0; i < N; i++) q += alpha[i] * Wa[i];
  return { ok: true, distance: Math.sqrt(Math.max(0, q)) };
}

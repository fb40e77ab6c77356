/**
 * Fama–MacBeth two-pass cross-sectional regressions with the Shanken correction.
 *
 * Formula (plain text): full-sample time-series betas β = C Σ_f^{-1} (N×K, OLS with intercept);
 * each period the cross-sectional OLS R_t = β λ_t (+ γ_0,t with the intercept option) + e_t,
 * λ_t = (X'X)^{-1} X' R_t with X = β or [1, β]; λ̂ = (1/T) Σ λ_t; Var_FM = s²/T with s² the
 * sample covariance of λ_t (divisor T − 1). Shanken correction for the factor premia:
 *   Var_Sh = (1 + λ̂' Σ̂_f^{-1} λ̂) Var_FM + Σ̂_f / T   (Σ̂_f with divisor T);
 * the intercept (when present) gets the multiplicative term only. p-values: two-sided normal.
 * Papers: Fama, E. F. and MacBeth, J. D. (1973), "Risk, Return, and Equilibrium: Empirical
 * Tests", Journal of Political Economy 81(3), 607–636. Shanken, J. (1992), "On the Estimation
 * of Beta-Pricing Models", Review of Financial Studies 5(1), 1–33.
 *
 * @example
 * // One factor, no intercept: λ_t = Σ_i β_i R_i,t / Σ_i β_i², and λ̂ is its time average.
 * famaMacBethCore(prepareMoments(returns, factors), ['MKT'], false).factors[0].lambda
 */
import { gmmFailure, type GmmResult } from './errors';
import { cholesky, choleskySolve, spdInverse, quadForm } from './linalg';
import type { MomentData } from './moments';
import { waldSingle } from './wald';

export interface FmCoefficient {
  readonly name: string;
  readonly lambda: number;
  readonly se: number;
  readonly t: number;
  readonly p: number;
  readonly seShanken: number;
  readonly tShanken: number;
  readonly pShanken: number;
}

export interface FamaMacBethResult {
  readonly intercept: boolean;
  readonly factors: readonly FmCoefficient[];
  /** The cross-sectional intercept (zero-beta excess return) when requested, else null. */
  readonly zeroBeta: FmCoefficient | null;
  /** λ̂' Σ̂_f^{-1} λ̂, the Shanken multiplier minus one. */
  readonly shankenC: number;
}

/**
 * Fama–MacBeth on precomputed moments.
 * @param m moments; @param names factor names (K); @param intercept add a cross-sectional
 *   intercept (reported as zeroBeta).
 * @returns `{ ok: true, ... }` premia with plain and Shanken-corrected SEs, or a typed 'singular'
 *   failure when Σ_f, the cross-sectional X'X or the premia covariance is singular.
 */
export function famaMacBethCore(m: MomentData, names: readonly string[], intercept: boolean): GmmResult<FamaMacBethResult> {
  const { T, N, K, R, sigmaF, covRF } = m;
  const Lf = cholesky(sigmaF, K);
  if (!Lf) return gmmFailure('singular', 'The factor covariance matrix is singular.', 'Σ_f');
  const Ct = new Float64Array(K * N);
  for (let i = 0; i < N; i++) for (let k = 0; k < K; k++) Ct[k * N + i] = covRF[i * K + k];
  const Bt = choleskySolve(Lf, K, Ct, N); // K×N = β'
  const q = K + (intercept ? 1 : 0);
  const Xt = new Float64Array(q * N); // X' (q×N)
  for (let i = 0; i < N; i++) {
    if (intercept) Xt[i] = 1;
    for (let k = 0; k < K; k++) Xt[(k + (intercept ? 1 : 0)) * N + i] = Bt[k * N + i];
  }
  const XtX = new Float64Array(q * q);
  for (let a = 0; a < q; a++)
    for (let c = 0; c < q; c++) {
      let s = 0;
      for (let i = 0; i < N; i++) s += Xt[a * N + i] * Xt[c * N + i];
      XtX[a * q + c] = s;
    }
  const Lx = cholesky(XtX, q);
  if (!Lx) return gmmFailure('singular', "The cross-sectional design X'X is singular.", "X'X");
  const P = choleskySolve(Lx, q, Xt, N); // (X'X)^{-1} X'  (q×N)
  const lam = new Float64Array(T * q);
  const mean = new Float64Array(q);
  for (let t = 0; t < T; t++) {
    const row = t * N;
    for (let a = 0; a < q; a++) {
      let s = 0;
      const pr = a * N;
      for (let i = 0; i < N; i++) s += P[pr + i] * R[row + i];
      lam[t * q + a] = s;
      mean[a] += s;
    }
  }
  for (let a = 0; a < q; a++) mean[a] /= T;
  const Vfm = new Float64Array(q * q);
  for (let t = 0; t < T; t++)
    for (let a = 0; a < q; a++) {
      const da = lam[t * q + a] - mean[a];
      for (let c = a; c < q; c++) Vfm[a * q + c] += da * (lam[t * q + c] - mean[c]);
    }
  for (let a = 0; a < q; a++)
    for (let c = a; c < q; c++) Vfm[c * q + a] = Vfm[a * q + c] = Vfm[a * q + c] / (T - 1) / T;
  const off = intercept ? 1 : 0;
  const lf = mean.subarray(off);
  const Si = spdInverse(sigmaF, K);
  if (!Si) return gmmFailure('singular', 'The covariance of the period premia is singular.');
  const cSh = quadForm(Si, K, lf);
  const coef = (a: number, name: string): FmCoefficient => {
    const v = Vfm[a * q + a];
    const vs = (1 + cSh) * v + (a >= off ? sigmaF[(a - off) * K + (a - off)] / T : 0);
    const z = waldSingle(mean[a], Math.sqrt(Math.max(0, v)));
    const zs = waldSingle(mean[a], Math.sqrt(Math.max(0, vs)));
    return { name, lambda: mean[a], se: z.se, t: z.t, p: z.p, seShanken: zs.se, tShanken: zs.t, pShanken: zs.p };
  };
  return {
    ok: true,
    intercept,
    factors: names.map((nm, k) => coef(k + off, nm)),
    zeroBeta: intercept ? coef(0, '(intercept)') : null,
    shankenC: cSh,
  };
}

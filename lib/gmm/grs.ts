/**
 * GRS test that the time-series intercepts of all test assets are jointly zero (all factors
 * traded).
 *
 * Formula (plain text): OLS R_i,t = α_i + β_i' f_t + ε_i,t for each asset;
 *   GRS = (T/N) ((T − N − K)/(T − K − 1)) α̂' Σ̂^{-1} α̂ / (1 + μ̂' Ω̂^{-1} μ̂) ~ F(N, T − N − K),
 * Σ̂ the residual covariance with divisor T − K − 1, Ω̂ the factor covariance with divisor T − 1,
 * μ̂ the factor means. Computed from the shared moments: β = C Σ_f^{-1}, α̂ = E_T[R] − β μ̂,
 * Σ̂ = (T/(T − K − 1)) (Cov_T(R) − C Σ_f^{-1} C').
 * Paper: Gibbons, M. R., Ross, S. A. and Shanken, J. (1989), "A Test of the Efficiency of a Given
 * Portfolio", Econometrica 57(5), 1121–1152.
 *
 * @example
 * // With T = 600, N = 10, one traded factor and zero true alphas:
 * grsTest({ returns, factors, factorNames: ['MKT'], traded: [true] }) // → { ok: true, stat ≈ 1, df1: 10, df2: 589, p, alpha }
 */
import { fSf } from './distributions';
import { GmmInputError, gmmFailure, type GmmResult } from './errors';
import { cholesky, choleskySolve, quadForm, spdInverse } from './linalg';
import { covarianceFromSecondMoment, prepareMoments, secondMomentMatrix, type MomentData } from './moments';
import { validateMatrices } from './validate';

export interface GrsTest {
  readonly stat: number;
  readonly df1: number;
  readonly df2: number;
  readonly p: number;
  /** Time-series intercepts α̂ (N). */
  readonly alpha: readonly number[];
}

/**
 * GRS on precomputed moments and E_T[RR'] (N×N). The caller checks that every factor is traded.
 * @returns `{ ok: true, stat, df1 = N, df2 = T − N − K, p, alpha }`, or a typed failure: code
 *   'not-defined' when T ≤ N + K, 'singular' when a covariance matrix is singular.
 */
export function grsCore(m: MomentData, secondMoment: Float64Array): GmmResult<GrsTest> {
  const { T, N, K, meanR, meanF, sigmaF, covRF } = m;
  if (T - N - K <= 0 || T - K - 1 <= 0) return gmmFailure('not-defined', `The GRS test needs T > N + K (T = ${T}, N = ${N}, K = ${K}).`);
  const singular = gmmFailure('singular', 'The residual or factor covariance matrix is singular.');
  const Lf = cholesky(sigmaF, K);
  if (!Lf) return singular;
  const covR = covarianceFromSecondMoment(secondMoment, meanR);
  // B' = Σ_f^{-1} C' (K×N)
  const Ct = new Float64Array(K * N);
  for (let i = 0; i < N; i++) for (let k = 0; k < K; k++) Ct[k * N + i] = covRF[i * K + k];
  const Bt = choleskySolve(Lf, K, Ct, N);
  const alpha = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    let s = meanR[i];
    for (let k = 0; k < K; k++) s -= Bt[k * N + i] * meanF[k];
    alpha[i] = s;
  }
  const scale = T / (T - K - 1);
  const Sigma = new Float64Array(N * N);
  for (let i = 0; i < N; i++)
    for (let j = i; j < N; j++) {
      let s = covR[i * N + j];
      for (let k = 0; k < K; k++) s -= covRF[i * K + k] * Bt[k * N + j];
      Sigma[i * N + j] = Sigma[j * N + i] = s * scale;
    }
  const Ls = cholesky(Sigma, N);
  if (!Ls) return singular;
  const x = choleskySolve(Ls, N, alpha, 1);
  let aSa = 0;
  for (let i = 0; i < N; i++) aSa += alpha[i] * x[i];
  const Omega = Float64Array.from(sigmaF, (v) => (v * T) / (T - 1));
  const Oi = spdInverse(Omega, K);
  if (!Oi) return singular;
  const mOm = quadForm(Oi, K, meanF);
  const stat = Math.max(0, ((T / N) * ((T - N - K) / (T - K - 1)) * aSa) / (1 + mOm));
  const df2 = T - N - K;
  return { ok: true, stat, df1: N, df2, p: fSf(stat, N, df2), alpha: Array.from(alpha) };
}

export interface GrsInput {
  readonly returns: readonly (readonly number[])[];
  readonly factors: readonly (readonly number[])[];
  readonly factorNames: readonly string[];
  readonly traded: readonly boolean[];
}

/**
 * GRS on plain arrays.
 * @throws GmmInputError 'not-traded' naming the first non-traded factor; other input errors
 *   from validateMatrices.
 * @returns `{ ok: true, stat, df1, df2, p, alpha }` or a typed failure (see grsCore).
 */
export function grsTest(input: GrsInput): GmmResult<GrsTest> {
  const bad = input.traded.findIndex((t) => !t);
  if (bad >= 0)
    throw new GmmInputError('not-traded', `The GRS test needs every factor traded; '${input.factorNames[bad]}' is not.`, {
      series: input.factorNames[bad],
    });
  validateMatrices(input.returns, input.factors, { factorNames: input.factorNames });
  const m = prepareMoments(input.returns, input.factors);
  return grsCore(m, secondMomentMatrix(m.R, m.T, m.N, m.Rcols));
}

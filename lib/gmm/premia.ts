/**
 * Factor risk premia λ̂ implied by the SDF loadings, with standard errors that account for the
 * estimation error in both b̂ and Σ̂_f.
 *
 * Formula (plain text). Centred form: λ̂ = Σ̂_f b̂, influence
 *   ψ_λ,t = Σ̂_f ψ_b,t + (f_t − μ)(f_t − μ)' b̂ − λ̂,   Var(λ̂) = (1/T) LRV(ψ_λ),
 * with ψ_b,t = H h_t from the GMM fit and the same Bartlett lag, or any other influence series of
 * b̂ the caller passes (robust.ts passes the misspecification-robust one, Kan and Robotti 2008).
 * Uncentred form: λ̂ = Σ̂_f b̂ / c, c = 1 − μ'b̂; by the delta method
 *   ψ_λ,t = [ (Σ̂_f + λ̂ μ') ψ_b,t + ((f_t − μ)(f_t − μ)' − Σ̂_f) b̂ + λ̂ b̂'(f_t − μ) ] / c.
 *
 * Papers: Kan, R., Robotti, C. and Shanken, J. (2013), "Pricing Model Performance and the
 * Two-Pass Cross-Sectional Regression Methodology", Journal of Finance 68(6), 2617–2649;
 * Jagannathan, R. and Wang, Z. (2002), "Empirical Evaluation of Asset-Pricing Models: A
 * Comparison of the SDF and Beta Methods", Journal of Finance 57(5), 2337–2367.
 *
 * @example
 * // One factor with Σ_f = 4e-4 and b̂ = 2.5: λ̂ = 4e-4 · 2.5 = 1e-3.
 * // premiaFromLoadings([4e-4], 1, [2.5]) → [0.001]
 */
import type { GmmFailure } from './errors';
import { hacCovariance } from './hac';
import type { MomentData } from './moments';
import type { SdfGmmFit } from './sdf-gmm';

/** λ = Σ_f b (K×K times K), the centred-form mapping. */
export function premiaFromLoadings(sigmaF: ArrayLike<number>, K: number, b: ArrayLike<number>): number[] {
  const out: number[] = [];
  for (let a = 0; a < K; a++) {
    let s = 0;
    for (let c = 0; c < K; c++) s += sigmaF[a * K + c] * b[c];
    out.push(s);
  }
  return out;
}

export interface PremiaFit {
  readonly ok: true;
  readonly lambda: Float64Array;
  readonly covLambda: Float64Array;
}

/** The typed numerical failure of this module (the library's one failure shape, errors.ts). */
export type PremiaFailure = GmmFailure;

/**
 * λ̂ and Var(λ̂) from a GMM fit on the same moments.
 * @param m the moments the fit was computed on.
 * @param fit a successful fitSdfGmm result (its lag is reused).
 * @param psiB optional influence series of b̂ (T×K row-major) to use in place of ψ_b,t = H h_t.
 * @returns λ̂ (K) and Var(λ̂) (K×K, row-major), or a typed failure when 1 − μ'b̂ is zero in the
 *   uncentred form.
 */
export function fitPremia(m: MomentData, fit: SdfGmmFit, psiB?: Float64Array): PremiaFit | PremiaFailure {
  const { T, N, K, F, Fc, R, meanR, sigmaF, meanF } = m;
  const { b, H, lags } = fit;
  let c = 1;
  if (fit.form === 'uncentred') {
    c = 1;
    for (let k = 0; k < K; k++) c -= meanF[k] * b[k];
    if (!(Math.abs(c) > 1e-12))
      return { ok: false, code: 'not-defined', message: "1 − μ'b̂ is zero: the uncentred premia are undefined." };
  }
  const sigB = premiaFromLoadings(sigmaF, K, b);
  const lambda = Float64Array.from(sigB, (v) => v / c);
  // A = Σ_f (centred) or Σ_f + λ μ' (uncentred), then A H (K×N) applied to h_t
  const A = new Float64Array(K * K);
  for (let a = 0; a < K; a++)
    for (let d = 0; d < K; d++) A[a * K + d] = sigmaF[a * K + d] + (fit.form === 'uncentred' ? lambda[a] * meanF[d] : 0);
  const AH = new Float64Array(K * N);
  for (let a = 0; a < K; a++)
    for (let d = 0; d < K; d++) {
      const v = A[a * K + d];
      if (v === 0) continue;
      for (let i = 0; i < N; i++) AH[a * N + i] += v * H[d * N + i];
    }
  // h_t = R_t (1 − s_t) + E[R] s_t (centred, factor means estimated) or R_t (1 − s_t), with
  // s_t = (f_t − μ)'b (centred) or f_t'b (uncentred); so A H h_t needs only A H R_t (K per t).
  const corrected = fit.form === 'centred' && !fit.factorMeansKnown;
  const AHER = new Float64Array(K);
  for (let a = 0; a < K; a++) {
    let v = 0;
    for (let i = 0; i < N; i++) v += AH[a * N + i] * meanR[i];
    AHER[a] = v;
  }
  const S = fit.form === 'uncentred' ? F : Fc;
  const psi = new Float64Array(T * K);
  for (let t = 0; t < T; t++) {
    const hr = t * N;
    const fr = t * K;
    let fb = 0;
    let st = 0;
    for (let k = 0; k < K; k++) {
      fb += Fc[fr + k] * b[k];
      st += S[fr + k] * b[k];
    }
    for (let a = 0; a < K; a++) {
      let s: number;
      if (psiB) {
        s = 0;
        for (let d = 0; d < K; d++) s += A[a * K + d] * psiB[fr + d];
      } else {
        let v = 0;
        const ar = a * N;
        for (let i = 0; i < N; i++) v += AH[ar + i] * R[hr + i];
        s = v * (1 - st) + (corrected ? AHER[a] * st : 0);
      }
      // (f̃ f̃' − Σ_f) b = f̃ (f̃'b) − Σ_f b
      s += Fc[fr + a] * fb - sigB[a];
      if (fit.form === 'uncentred') s += lambda[a] * fb;
      psi[fr + a] = s / c;
    }
  }
  const covLambda = hacCovariance(psi, T, K, lags);
  for (let i = 0; i < covLambda.length; i++) covLambda[i] /= T;
  return { ok: true, lambda, covLambda };
}

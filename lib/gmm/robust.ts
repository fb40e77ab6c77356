/**
 * Misspecification-robust standard errors of the first-stage SDF loadings b̂ and premia λ̂.
 *
 * Every model is false, so at the pseudo-true b* the pricing errors e = E[R] − X b* are not zero
 * and the usual influence function ψ_b,t = H h_t (which assumes e = 0) misses the sampling error
 * of X and of the weighting matrix. For a weighting that does not depend on b — W = I, the
 * second-moment weighting W = (E_T[RR'])^{-1} or the covariance weighting W = (Cov_T(R))^{-1} —
 * linearising the first-order condition X'W ê = 0 (ê = E_T[R] − X b̂) without setting e = 0 gives
 *
 *   ψ_t = A^{-1} [ X'W (h_t − ê) + (X_t − X)' W ê − X'W (Q_t − Q) W ê ],   A = X'WX,
 *   Var_rob(b̂) = (1/T) LRV(ψ)   (Bartlett HAC, the run's lag, not demeaned; Σ_t ψ_t = 0 anyway).
 *
 * Derivation (first order, hats dropped): X'W e = 0 at the pseudo-true values; perturbing
 * E_T[R], X and W, dX' W e + X' dW e + X'W (dE[R] − dX b − X db) = 0, so
 *   A db = X'W (dE[R] − dX b) + dX' W e + X' dW e,   with dW = −W dQ W for W = Q^{-1}.
 * Replacing each perturbation by its influence series (dE[R] → R_t − R̄, dX → X_t − X,
 * dQ → Q_t − Q) gives ψ_t, because the moment series of each form is h_t = R_t − X_t b, whose
 * mean is ê, so X'W(dE[R] − dX b) → X'W(h_t − ê). X_t must therefore be the term whose sample
 * mean is X and which matches that run's h_t:
 *   centred, factor means estimated: X = C, X_t = C_t = (R_t − R̄)(f_t − μ)'
 *     (h_t = R_t(1 − (f_t − μ)'b) + R̄ b'(f_t − μ) = R_t − C_t b; the estimation error of μ
 *     and R̄ inside C_t is of second order);
 *   centred, factorMeansKnown: X = C, X_t = R_t (f_t − μ)' (μ treated as known: h_t = e_t =
 *     R_t(1 − (f_t − μ)'b) = R_t − X_t b);
 *   uncentred: X = D, X_t = D_t = R_t f_t' (h_t = R_t(1 − f_t'b)).
 * Q_t: R_t R_t' with Q = E_T[RR'] (second moment); (R_t − R̄)(R_t − R̄)' with Q = Cov_T(R)
 * (covariance; the R̄ error is again of second order); no Q-term for W = I. Because
 * W = Q^{-1} here, Q W ê = ê.
 * Identity: at the sample, X'W ê = 0 exactly (the first-order condition), so the first term is
 * A^{-1}X'W h_t = H h_t; with ê = 0 (e.g. an exactly identified model) ψ_t = H h_t, the standard
 * influence function.
 * Premia: λ̂ = Σ̂_f b̂ (centred) with ψ in place of ψ_b in premia.ts, likewise uncentred.
 *
 * Computation: with v = W ê (N), X_t'v = x_t (r_t'v) (x_t = f_t − μ or f_t, r_t = R_t − R̄ or R_t)
 * and H Q_t v = (H q_t)(q_t'v) (q_t = R_t or R_t − R̄), so ψ costs O(T N K), never T×N×N.
 *
 * Papers: Kan, R. and Robotti, C. (2008), "Specification Tests of Asset Pricing Models Using
 * Excess Returns", Journal of Empirical Finance 15(5), 816–838; Gospodinov, N., Kan, R. and
 * Robotti, C. (2014), "Misspecification-Robust Inference in Linear Asset-Pricing Models with
 * Irrelevant Risk Factors", Review of Financial Studies 27(7), 2139–2170.
 *
 * @example
 * const m = prepareMoments(returns, factors);
 * const fit = fitSdfGmm(m, { stage: 'first', weighting: 'covariance', lags: 4 });
 * const rob = fit.ok ? robustInference(m, fit) : null;
 * // rob.ok → rob.covB (K×K), rob.covLambda (K×K); with N = K, rob.covB equals fit.covB to rounding
 */
import { GmmInputError, gmmFailure, type GmmFailure, type GmmResult } from './errors';
import { hacCovariance } from './hac';
import { cholesky, choleskySolve } from './linalg';
import type { MomentData } from './moments';
import { fitPremia } from './premia';
import type { SdfGmmFit } from './sdf-gmm';

export interface RobustFit {
  readonly ok: true;
  /** ψ_t, T×K row-major. */
  readonly psi: Float64Array;
  /** Var_rob(b̂) = LRV(ψ)/T (K×K). */
  readonly covB: Float64Array;
  /** Var_rob(λ̂) (K×K), from the premia influence with ψ in place of ψ_b. */
  readonly covLambda: Float64Array;
}

/** The typed numerical failure of this module (the library's one failure shape, errors.ts). */
export type RobustFailure = GmmFailure;

/**
 * The misspecification-robust influence series ψ_t (T×K) of a first-stage fit.
 * @throws GmmInputError ('invalid-option') for a second-stage or iterated fit: its weighting
 *   depends on b̂ and the formula does not apply.
 */
export function robustInfluence(m: MomentData, fit: SdfGmmFit): GmmResult<{ psi: Float64Array }> {
  if (fit.stage !== 'first')
    throw new GmmInputError(
      'invalid-option',
      'Misspecification-robust SEs need a first-stage fit: the weighting of a second-stage or iterated fit depends on b̂.',
    );
  const { T, N, K, R, F, Fc, meanR } = m;
  const { X, W, H, alpha: e, b } = fit;
  const uncentred = fit.form === 'uncentred';
  const known = fit.form === 'centred' && fit.factorMeansKnown;
  // A = X'WX (K×K) through its Cholesky factor
  const WX = new Float64Array(N * K);
  for (let i = 0; i < N; i++)
    for (let j = 0; j < N; j++) {
      const w = W[i * N + j];
      if (w === 0) continue;
      for (let k = 0; k < K; k++) WX[i * K + k] += w * X[j * K + k];
    }
  const A = new Float64Array(K * K);
  for (let a = 0; a < K; a++)
    for (let c = 0; c < K; c++) {
      let s = 0;
      for (let i = 0; i < N; i++) s += X[i * K + a] * WX[i * K + c];
      A[a * K + c] = s;
    }
  const LA = cholesky(A, K);
  if (!LA) return gmmFailure('singular', "X'WX is singular: robust SEs cannot be computed.", "X'WX");
  // v = W ê; X'v (K)
  const v = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    let s = 0;
    for (let j = 0; j < N; j++) s += W[i * N + j] * e[j];
    v[i] = s;
  }
  const Xv = new Float64Array(K);
  for (let k = 0; k < K; k++) {
    let s = 0;
    for (let i = 0; i < N; i++) s += X[i * K + k] * v[i];
    Xv[k] = s;
  }
  // H ê (= H Q W ê for the weighted forms, since Q W = I)
  const He = new Float64Array(K);
  for (let k = 0; k < K; k++) {
    let s = 0;
    for (let i = 0; i < N; i++) s += H[k * N + i] * e[i];
    He[k] = s;
  }
  const qTerm = fit.weighting !== 'identity';
  const qCentred = fit.weighting === 'covariance';
  const xs = uncentred ? F : Fc;
  const psi = new Float64Array(T * K);
  const mid = new Float64Array(T * K); // (X_t − X)'W ê per t, before A^{-1}
  for (let t = 0; t < T; t++) {
    const rr = t * N;
    const fr = t * K;
    // s_t = x_t'b, h_t = R_t − X_t b
    let st = 0;
    for (let k = 0; k < K; k++) st += xs[fr + k] * b[k];
    // r_t'v, with r_t = R_t − R̄ (centred, means estimated) or R_t (means known, uncentred)
    let rv = 0;
    let qv = 0;
    for (let i = 0; i < N; i++) {
      const r = R[rr + i];
      rv += (known || uncentred ? r : r - meanR[i]) * v[i];
      qv += (qCentred ? r - meanR[i] : r) * v[i];
    }
    for (let k = 0; k < K; k++) {
      // H (h_t − ê): h_t,i = R_t,i − (r_t,i) s_t with r_t = R_t − R̄ (centred, estimated) or R_t
      let hh = 0;
      let hq = 0;
      const hr = k * N;
      for (let i = 0; i < N; i++) {
        const r = R[rr + i];
        const ri = known || uncentred ? r : r - meanR[i];
        hh += H[hr + i] * (r - ri * st - e[i]);
        if (qTerm) hq += H[hr + i] * (qCentred ? r - meanR[i] : r);
      }
      psi[fr + k] = hh - (qTerm ? hq * qv - He[k] : 0);
      mid[fr + k] = xs[fr + k] * rv - Xv[k];
    }
  }
  // ψ_t += A^{-1} (X_t − X)'W ê, all t at once (K×T right-hand side)
  const rhs = new Float64Array(K * T);
  for (let t = 0; t < T; t++) for (let k = 0; k < K; k++) rhs[k * T + t] = mid[t * K + k];
  const sol = choleskySolve(LA, K, rhs, T);
  for (let t = 0; t < T; t++) for (let k = 0; k < K; k++) psi[t * K + k] += sol[k * T + t];
  return { ok: true, psi };
}

/**
 * Misspecification-robust Var(b̂) and Var(λ̂) for a first-stage fit on the same moments.
 * @param m the moments the fit was computed on; @param fit a successful first-stage fitSdfGmm result.
 * @returns ψ, Var_rob(b̂), Var_rob(λ̂), or a typed failure (singular X'WX, 1 − μ'b̂ = 0).
 * @throws GmmInputError for a second-stage or iterated fit.
 */
export function robustInference(m: MomentData, fit: SdfGmmFit): RobustFit | RobustFailure {
  const influence = robustInfluence(m, fit);
  if (!influence.ok) return influence;
  const { psi } = influence;
  const { T, K } = m;
  const covB = hacCovariance(psi, T, K, fit.lags);
  for (let i = 0; i < covB.length; i++) covB[i] /= T;
  const prem = fitPremia(m, fit, psi);
  if (!prem.ok) return prem;
  return { ok: true, psi, covB, covLambda: prem.covLambda };
}

/**
 * χ² difference ("drop") test with a common weighting matrix: can the factors in S be dropped?
 *
 * Formula (plain text): W* = Ŝ_u^{-1}, the weighting matrix of the unrestricted model's second
 * stage (for iterated GMM, the final one; for a first-stage run, Ŝ at the first-stage b̂, i.e. the
 * second stage computed from it: see `dropWeighting`). Estimate the unrestricted model and the restricted
 * model (b_S = 0: drop those columns of X) both with W*:
 *   b̂_r = (X_r' W* X_r)^{-1} X_r' W* E_T[R],  g_r = E_T[R] − X_r b̂_r,
 *   D = T (g_r' W* g_r − g_u' W* g_u) ~ χ²(|S|).
 * J statistics computed with different weighting matrices are never compared.
 * Paper: Newey, W. K. and West, K. D. (1987), "Hypothesis Testing with Efficient Method of
 * Moments Estimation", International Economic Review 28(3), 777–787.
 *
 * @example
 * // With W* = I, E[R] = (1, 2), X = [[1, 0], [0, 1]] (N = K = 2, T = 10): g_u = 0; dropping
 * // factor 2 leaves g_r = (0, 2), so D = 10 · 4 = 40 on 1 df.
 * chiSquareDifference({ T: 10, N: 2, K: 2, X: [1, 0, 0, 1], W: [1, 0, 0, 1], meanR: [1, 2] }, [1]) // → { ok: true, stat: 40, df: 1, p }
 */
import { chiSquareSf } from './distributions';
import { gmmFailure, type GmmResult } from './errors';
import { cholesky, choleskyInverse, choleskySolve, quadForm } from './linalg';
import type { SdfGmmFit } from './sdf-gmm';

/**
 * The common weighting W* of the drop tests for a fit: the last weighting of a second-stage or
 * iterated fit (Ŝ_u⁻¹), and for a first-stage fit the second stage computed from it — Ŝ, the HAC
 * of h_t at the first-stage b̂ with the same lag (the fit's `Sb`), inverted (methods contract,
 * drop test 2). A typed 'singular' failure when that Ŝ is singular.
 */
export function dropWeighting(fit: SdfGmmFit): GmmResult<{ readonly W: Float64Array }> {
  if (fit.stage !== 'first') return { ok: true, W: fit.W };
  const L = cholesky(fit.Sb, fit.N);
  return L ? { ok: true, W: choleskyInverse(L, fit.N) } : gmmFailure('singular', 'The long-run covariance Ŝ at the first-stage b̂ is singular.', 'S');
}

export interface DropTestInput {
  readonly T: number;
  readonly N: number;
  readonly K: number;
  /** X = C or D (N×K, row-major). */
  readonly X: ArrayLike<number>;
  /** W* (N×N, row-major): the unrestricted second-stage weighting. */
  readonly W: ArrayLike<number>;
  readonly meanR: ArrayLike<number>;
}

export interface DropTest {
  readonly stat: number;
  readonly df: number;
  readonly p: number;
}

function weightedObjective(inp: DropTestInput, WX: Float64Array, WR: Float64Array, keep: number[]): number | null {
  const { N, K, X, W, meanR } = inp;
  const k = keep.length;
  let b: Float64Array = new Float64Array(0);
  if (k > 0) {
    const A = new Float64Array(k * k);
    const rhs = new Float64Array(k);
    for (let a = 0; a < k; a++) {
      for (let c = 0; c < k; c++) {
        let s = 0;
        for (let i = 0; i < N; i++) s += X[i * K + keep[a]] * WX[i * K + keep[c]];
        A[a * k + c] = s;
      }
      let s = 0;
      for (let i = 0; i < N; i++) s += X[i * K + keep[a]] * WR[i];
      rhs[a] = s;
    }
    const L = cholesky(A, k);
    if (!L) return null;
    b = choleskySolve(L, k, rhs, 1);
  }
  const g = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    let s = meanR[i];
    for (let a = 0; a < k; a++) s -= X[i * K + keep[a]] * b[a];
    g[i] = s;
  }
  return quadForm(W, N, g);
}

/** W X (N×K) and W E_T[R] (N) for a symmetric weighting W (N×N): the products every drop test and sweep reuses. */
export function weightProducts(
  X: ArrayLike<number>,
  W: ArrayLike<number>,
  meanR: ArrayLike<number>,
  N: number,
  K: number,
): { WX: Float64Array; WR: Float64Array } {
  const WX = new Float64Array(N * K);
  const WR = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    let r = 0;
    for (let j = 0; j < N; j++) {
      const w = W[i * N + j];
      r += w * meanR[j];
      for (let k = 0; k < K; k++) WX[i * K + k] += w * X[j * K + k];
    }
    WR[i] = r;
  }
  return { WX, WR };
}

/**
 * A tester that shares W*X, W*E[R] and the unrestricted objective across many drop sets
 * (per-factor tests, chosen sets, a subset sweep).
 */
export function dropTester(inp: DropTestInput): (drop: readonly number[]) => GmmResult<DropTest> {
  const { N, K, X, W, meanR, T } = inp;
  const { WX, WR } = weightProducts(X, W, meanR, N, K);
  const all = Array.from({ length: K }, (_, k) => k);
  const qu = weightedObjective(inp, WX, WR, all);
  return (drop) => {
    const qr = weightedObjective(
      inp,
      WX,
      WR,
      all.filter((k) => !drop.includes(k)),
    );
    if (qu === null || qr === null) return gmmFailure('singular', 'A restricted or the unrestricted system of the drop test is singular.');
    const stat = Math.max(0, T * (qr - qu));
    return { ok: true, stat, df: drop.length, p: chiSquareSf(stat, drop.length) };
  };
}

/**
 * The drop test for the factor indices `drop` (0-based). A typed 'singular' failure when a
 * restricted system is singular.
 */
export function chiSquareDifference(inp: DropTestInput, drop: readonly number[]): GmmResult<DropTest> {
  return dropTester(inp)(drop);
}

/**
 * Core sample moments on precomputed row-major Float64Array data, separately callable so that
 * later deep checks (bootstrap, subset sweep, rolling windows) can share them.
 *
 * Conventions (methods contract): divisor T everywhere,
 *   μ = E_T[f], Σ_f = Cov_T(f, f), C = Cov_T(R, f) (N×K), D = E_T[R f'] (N×K),
 *   E_T[R R'] (N×N), Cov_T(R) = E_T[R R'] − E_T[R] E_T[R]'.
 *
 * @example
 * const m = prepareMoments([[0.01], [0.03]], [[0.02], [0.04]]);
 * // m.meanR[0] = 0.02, m.meanF[0] = 0.03, m.sigmaF[0] = 1e-4, m.covRF[0] = 1e-4
 */
import { crossProductColumns, toColumnMajor } from './hac';
import { fromNested } from './linalg';

/** Row-major data and first/second moments shared by every estimator. */
export interface MomentData {
  readonly T: number;
  readonly N: number;
  readonly K: number;
  /** Excess returns, T×N row-major. */
  readonly R: Float64Array;
  /** Factors, T×K row-major. */
  readonly F: Float64Array;
  /** Factors minus their sample means, T×K row-major. */
  readonly Fc: Float64Array;
  /** E_T[R] (N). */
  readonly meanR: Float64Array;
  /** μ = E_T[f] (K). */
  readonly meanF: Float64Array;
  /** Σ_f = Cov_T(f) (K×K). */
  readonly sigmaF: Float64Array;
  /** C = Cov_T(R, f) (N×K). */
  readonly covRF: Float64Array;
  /** D = E_T[R f'] (N×K). */
  readonly crossRF: Float64Array;
  /** The returns again, column-major (N×T): the layout of the HAC and second-moment kernels. */
  readonly Rcols: Float64Array;
}

/** Column means of a row-major T×p matrix. */
export function columnMeans(X: Float64Array, T: number, p: number): Float64Array {
  const m = new Float64Array(p);
  for (let t = 0; t < T; t++) {
    const row = t * p;
    for (let a = 0; a < p; a++) m[a] += X[row + a];
  }
  for (let a = 0; a < p; a++) m[a] /= T;
  return m;
}

/** X minus its column means (new array). */
export function centreColumns(X: Float64Array, T: number, p: number, means = columnMeans(X, T, p)): Float64Array {
  const Y = new Float64Array(T * p);
  for (let t = 0; t < T; t++) {
    const row = t * p;
    for (let a = 0; a < p; a++) Y[row + a] = X[row + a] - means[a];
  }
  return Y;
}

/** (1/T) X' Y for row-major X (T×px), Y (T×py): the px×py cross moment. */
export function crossMoment(X: Float64Array, px: number, Y: Float64Array, py: number, T: number): Float64Array {
  const out = new Float64Array(px * py);
  for (let t = 0; t < T; t++) {
    const rx = t * px;
    const ry = t * py;
    for (let a = 0; a < px; a++) {
      const xa = X[rx + a];
      const ro = a * py;
      for (let b = 0; b < py; b++) out[ro + b] += xa * Y[ry + b];
    }
  }
  for (let i = 0; i < out.length; i++) out[i] /= T;
  return out;
}

/**
 * E_T[x x'] = (1/T) X'X for row-major X (T×p), by the blocked symmetric kernel.
 * @param columns X column-major (p×T) when the caller has it (e.g. `MomentData.Rcols`); made here otherwise.
 */
export function secondMomentMatrix(X: Float64Array, T: number, p: number, columns?: Float64Array): Float64Array {
  return secondMomentFromColumns(columns ?? toColumnMajor(X, T, p), T, p);
}

/** (1/T) X'X from the column-major copy Xc (p×T) alone. */
export function secondMomentFromColumns(Xc: Float64Array, T: number, p: number): Float64Array {
  const S = crossProductColumns(Xc, T, p);
  for (let i = 0; i < S.length; i++) S[i] /= T;
  return S;
}

/** Cov_T(x) = E_T[x x'] − E_T[x] E_T[x]' from a precomputed second moment. */
export function covarianceFromSecondMoment(second: Float64Array, mean: Float64Array): Float64Array {
  const p = mean.length;
  const out = new Float64Array(p * p);
  for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) out[a * p + b] = second[a * p + b] - mean[a] * mean[b];
  return out;
}

/** All moments from packed row-major returns (T×N) and factors (T×K): those of the column-major copy, plus R. */
export function momentsFromPacked(R: Float64Array, F: Float64Array, T: number, N: number, K: number): MomentData {
  return { ...momentsFromColumns(toColumnMajor(R, T, N), F, T, N, K), R };
}

/** The moments of {@link MomentData} without the row-major returns: enough for estimators that read the returns column by column. */
export type ColumnMoments = Omit<MomentData, 'R'>;

/**
 * The moments from column-major returns Rc (N×T) and row-major factors, with no row-major copy of
 * the returns (momentsFromPacked adds one). Every sum runs over t in order, as columnMeans and
 * crossMoment on the row-major returns do, so the numbers are identical to theirs to the last bit
 * (tests/gmm/bootstrap-columns.test.ts). The bootstrap's draws, gathered straight into columns,
 * use it directly.
 */
export function momentsFromColumns(Rc: Float64Array, F: Float64Array, T: number, N: number, K: number): ColumnMoments {
  const meanR = new Float64Array(N);
  const meanF = columnMeans(F, T, K);
  const Fc = centreColumns(F, T, K, meanF);
  const sigmaF = crossMoment(Fc, K, Fc, K, T);
  const FcT = new Float64Array(K * T);
  for (let t = 0; t < T; t++) for (let k = 0; k < K; k++) FcT[k * T + t] = Fc[t * K + k];
  const covRF = new Float64Array(N * K);
  // each sum runs over t in order; up to four of them share a pass (independent additions)
  for (let i = 0; i < N; i++) {
    const off = i * T;
    let sum = 0;
    for (let t = 0; t < T; t++) sum += Rc[off + t];
    meanR[i] = sum / T;
    for (let k0 = 0; k0 < K; k0 += 4) {
      const n = Math.min(4, K - k0);
      const f0 = k0 * T, f1 = f0 + (n > 1 ? T : 0), f2 = f0 + (n > 2 ? 2 * T : 0), f3 = f0 + (n > 3 ? 3 * T : 0);
      let v0 = 0, v1 = 0, v2 = 0, v3 = 0;
      for (let t = 0; t < T; t++) {
        const r = Rc[off + t];
        v0 += r * FcT[f0 + t];
        v1 += r * FcT[f1 + t];
        v2 += r * FcT[f2 + t];
        v3 += r * FcT[f3 + t];
      }
      const v = [v0, v1, v2, v3];
      for (let j = 0; j < n; j++) covRF[i * K + k0 + j] = v[j] / T;
    }
  }
  const crossRF = new Float64Array(N * K);
  for (let i = 0; i < N; i++) for (let k = 0; k < K; k++) crossRF[i * K + k] = covRF[i * K + k] + meanR[i] * meanF[k];
  return { T, N, K, F, Fc, meanR, meanF, sigmaF, covRF, crossRF, Rcols: Rc };
}

/**
 * Moments from plain arrays (rows = periods). Input is assumed validated (see `validateInput`).
 * @param returns T×N excess returns (decimals).
 * @param factors T×K factors.
 */
export function prepareMoments(returns: readonly (readonly number[])[], factors: readonly (readonly number[])[]): MomentData {
  const T = returns.length;
  const N = T > 0 ? returns[0].length : 0;
  const K = T > 0 ? factors[0].length : 0;
  return momentsFromPacked(fromNested(returns, N), fromNested(factors, K), T, N, K);
}

/**
 * The same data restricted to a subset of factors (columns `idx` of F, in that order), reusing the
 * return-side moments. For the subset sweep.
 */
export function selectFactors(m: MomentData, idx: readonly number[]): MomentData {
  const K2 = idx.length;
  const { T, N, K } = m;
  const F = new Float64Array(T * K2);
  const Fc = new Float64Array(T * K2);
  for (let t = 0; t < T; t++)
    for (let j = 0; j < K2; j++) {
      F[t * K2 + j] = m.F[t * K + idx[j]];
      Fc[t * K2 + j] = m.Fc[t * K + idx[j]];
    }
  const meanF = Float64Array.from(idx, (k) => m.meanF[k]);
  const sigmaF = new Float64Array(K2 * K2);
  for (let a = 0; a < K2; a++) for (let b = 0; b < K2; b++) sigmaF[a * K2 + b] = m.sigmaF[idx[a] * K + idx[b]];
  const covRF = new Float64Array(N * K2);
  const crossRF = new Float64Array(N * K2);
  for (let i = 0; i < N; i++)
    for (let j = 0; j < K2; j++) {
      covRF[i * K2 + j] = m.covRF[i * K + idx[j]];
      crossRF[i * K2 + j] = m.crossRF[i * K + idx[j]];
    }
  return { T, N, K: K2, R: m.R, F, Fc, meanR: m.meanR, meanF, sigmaF, covRF, crossRF, Rcols: m.Rcols };
}

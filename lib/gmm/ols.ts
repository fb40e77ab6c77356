/**
 * Ordinary least squares with classical or HAC standard errors.
 *
 * Formula (plain text): β̂ = argmin ‖y − Xβ‖², computed by Householder QR (X = QR, β̂ = R^{-1}Q'y).
 * Classical: s² = RSS/(n − p), Var(β̂) = s² (X'X)^{-1} = s² R^{-1} R^{-T}.
 * HAC: Var(β̂) = (X'X)^{-1} [T · S] (X'X)^{-1}, S the Bartlett long-run covariance of x_t ε̂_t
 * with divisor T and no small-sample correction (equivalently (1/T) Q^{-1} S Q^{-1}, Q = X'X/T).
 * Papers: least squares as in any text (e.g. Greene, Econometric Analysis); HAC: Newey, W. K. and
 * West, K. D. (1987), Econometrica 55(3), 703–708. Certified check: NIST StRD Longley data.
 *
 * @example
 * // y = 1 + 2x exactly:
 * olsFit([3, 5, 7, 9], [[1, 1], [1, 2], [1, 3], [1, 4]]).coef // → [1, 2]
 */
import { Matrix, QrDecomposition } from 'ml-matrix';
import { GmmInputError, type GmmFailure } from './errors';
import { hacCovariance } from './hac';

export interface OlsResult {
  readonly ok: true;
  readonly coef: readonly number[];
  readonly se: readonly number[];
  readonly cov: readonly (readonly number[])[];
  readonly residualSd: number;
  readonly rSquared: number;
  readonly dfResidual: number;
}

/** The typed numerical failure of this module (the library's one failure shape, errors.ts). */
export type OlsFailure = GmmFailure;

/**
 * OLS by QR with classical SEs (`covariance: 'classical'`) or Bartlett HAC SEs with lag `lags`.
 * `rSquared` is centred when X contains a constant column and uncentred otherwise.
 * @throws GmmInputError for shape mismatches or non-finite values.
 */
export function olsFit(
  y: readonly number[],
  X: readonly (readonly number[])[],
  options: { covariance?: 'classical' | 'hac'; lags?: number } = {},
): OlsResult | OlsFailure {
  const n = y.length;
  if (n === 0 || X.length !== n) throw new GmmInputError('length-mismatch', `y has ${n} rows but X has ${X.length}.`);
  const p = X[0].length;
  for (let i = 0; i < n; i++) {
    if (X[i].length !== p) throw new GmmInputError('ragged-row', `Row ${i + 1} of X has ${X[i].length} values; expected ${p}.`, { row: i });
    if (!Number.isFinite(y[i]) || X[i].some((v) => !Number.isFinite(v)))
      throw new GmmInputError('non-finite', `Row ${i + 1} has a value that is not a finite number.`, { row: i });
  }
  if (n <= p) throw new GmmInputError('too-few-periods', `${n} observations are too few for ${p} regressors.`);
  const qr = new QrDecomposition(new Matrix(X.map((r) => [...r])));
  if (!qr.isFullRank()) return { ok: false, code: 'singular', message: 'The regressors are linearly dependent.' };
  const coef = qr.solve(Matrix.columnVector([...y])).getColumn(0);
  const R = qr.upperTriangularMatrix;
  // R^{-1} by back substitution (p×p upper triangular)
  const Ri = new Float64Array(p * p);
  for (let c = 0; c < p; c++) {
    for (let i = p - 1; i >= 0; i--) {
      let s = i === c ? 1 : 0;
      for (let k = i + 1; k < p; k++) s -= R.get(i, k) * Ri[k * p + c];
      Ri[i * p + c] = s / R.get(i, i);
    }
  }
  // (X'X)^{-1} = R^{-1} R^{-T}
  const XtXi = new Float64Array(p * p);
  for (let a = 0; a < p; a++)
    for (let b = 0; b < p; b++) {
      let s = 0;
      for (let k = Math.max(a, b); k < p; k++) s += Ri[a * p + k] * Ri[b * p + k];
      XtXi[a * p + b] = s;
    }
  const resid = new Float64Array(n);
  let rss = 0;
  let ybar = 0;
  for (let i = 0; i < n; i++) ybar += y[i] / n;
  let tss = 0;
  let tssU = 0;
  const hasConst = X[0].some((_, j) => X.every((r) => r[j] === X[0][j]) && X[0][j] !== 0);
  for (let i = 0; i < n; i++) {
    let fit = 0;
    for (let j = 0; j < p; j++) fit += X[i][j] * coef[j];
    resid[i] = y[i] - fit;
    rss += resid[i] ** 2;
    tss += (y[i] - ybar) ** 2;
    tssU += y[i] ** 2;
  }
  const df = n - p;
  const s2 = rss / df;
  let cov: Float64Array;
  if ((options.covariance ?? 'classical') === 'classical') {
    cov = XtXi.map((v) => v * s2);
  } else {
    const lags = options.lags ?? 0;
    const xe = new Float64Array(n * p);
    for (let i = 0; i < n; i++) for (let j = 0; j < p; j++) xe[i * p + j] = X[i][j] * resid[i];
    const S = hacCovariance(xe, n, p, lags); // (1/n) Σ… ; n·S is the unscaled sum
    cov = new Float64Array(p * p);
    const tmp = new Float64Array(p * p);
    for (let a = 0; a < p; a++)
      for (let b = 0; b < p; b++) {
        let s = 0;
        for (let k = 0; k < p; k++) s += XtXi[a * p + k] * S[k * p + b];
        tmp[a * p + b] = s * n;
      }
    for (let a = 0; a < p; a++)
      for (let b = 0; b < p; b++) {
        let s = 0;
        for (let k = 0; k < p; k++) s += tmp[a * p + k] * XtXi[k * p + b];
        cov[a * p + b] = s;
      }
  }
  const covNested: number[][] = [];
  for (let a = 0; a < p; a++) covNested.push(Array.from(cov.subarray(a * p, a * p + p)));
  return {
    ok: true,
    coef,
    se: covNested.map((r, i) => Math.sqrt(Math.max(0, r[i]))),
    cov: covNested,
    residualSd: Math.sqrt(s2),
    rSquared: 1 - rss / (hasConst ? tss : tssU),
    dfResidual: df,
  };
}

/**
 * Input validation shared by every estimator. Caller mistakes throw `GmmInputError` with a code,
 * the offending series name and the 1-based row in the message (0-based `row` on the error).
 *
 * Collinearity is detected by a Cholesky factorisation of the correlation matrix taken in the
 * given order: the k-th pivot equals 1 − R²_k of the regression of series k on the series before
 * it, so a pivot below 1e-10 names series k as an exact linear combination of the earlier ones.
 *
 * @example
 * // validateMatrices([[0.01, 0.02], [0.03, 0.01], [0.02, 0.02], [0.00, 0.01]], [[0.01], [0.02], [0.02], [0.0]]) // passes
 * // validateMatrices([[0.01], [NaN]], [[0.0], [0.1]]) // throws GmmInputError code 'non-finite'
 */
import { GmmInputError } from './errors';

/** Pivot (1 − R²) below which a series counts as an exact linear combination of earlier ones. */
export const COLLINEAR_TOL = 1e-10;

export interface SeriesNames {
  readonly assetNames?: readonly string[];
  readonly factorNames?: readonly string[];
}

const assetLabel = (names: SeriesNames, i: number) => (names.assetNames ? `'${names.assetNames[i]}'` : `asset ${i + 1}`);
const factorLabel = (names: SeriesNames, k: number) => (names.factorNames ? `'${names.factorNames[k]}'` : `factor ${k + 1}`);

function checkBlock(
  rows: readonly (readonly number[])[],
  width: number,
  what: 'returns' | 'factors',
  label: (j: number) => string,
  rawName: (j: number) => string | undefined,
): void {
  for (let t = 0; t < rows.length; t++) {
    const row = rows[t];
    if (!Array.isArray(row) || row.length !== width)
      throw new GmmInputError(
        'ragged-row',
        `Row ${t + 1} of the ${what} has ${Array.isArray(row) ? row.length : 0} values; expected ${width}.`,
        { row: t },
      );
    for (let j = 0; j < width; j++) {
      const v = row[j];
      if (typeof v !== 'number' || !Number.isFinite(v)) {
        const shown = typeof v === 'number' ? String(v) : v === null ? 'missing' : typeof v;
        throw new GmmInputError('non-finite', `Row ${t + 1}, ${what === 'returns' ? 'asset' : 'factor'} ${label(j)}: value ${shown} is not a finite number.`, {
          row: t,
          series: rawName(j),
        });
      }
    }
  }
}

function checkConstant(
  rows: readonly (readonly number[])[],
  width: number,
  label: (j: number) => string,
  rawName: (j: number) => string | undefined,
  kind: string,
): void {
  const T = rows.length;
  for (let j = 0; j < width; j++) {
    let mean = 0;
    let maxAbs = 0;
    for (let t = 0; t < T; t++) {
      mean += rows[t][j];
      maxAbs = Math.max(maxAbs, Math.abs(rows[t][j]));
    }
    mean /= T;
    let v = 0;
    for (let t = 0; t < T; t++) v += (rows[t][j] - mean) ** 2;
    const sd = Math.sqrt(v / T);
    if (sd <= 1e-12 * Math.max(maxAbs, 1e-300) || sd === 0)
      throw new GmmInputError('constant-series', `The ${kind} ${label(j)} is constant; it carries no information.`, {
        series: rawName(j),
      });
  }
}

/**
 * Shapes, N ≥ K (checked before any moment is computed), finiteness, T > N + K, constant
 * series and collinear factors.
 * @throws GmmInputError (codes: empty-input, length-mismatch, too-few-assets, ragged-row,
 *   non-finite, too-few-periods, constant-series, collinear-factor).
 */
export function validateMatrices(
  returns: readonly (readonly number[])[],
  factors: readonly (readonly number[])[],
  names: SeriesNames = {},
): { T: number; N: number; K: number } {
  if (!Array.isArray(returns) || returns.length === 0 || !Array.isArray(returns[0]) || returns[0].length === 0)
    throw new GmmInputError('empty-input', 'The returns are empty: need T rows of N test-asset returns.');
  if (!Array.isArray(factors) || factors.length === 0 || !Array.isArray(factors[0]) || factors[0].length === 0)
    throw new GmmInputError('empty-input', 'The factors are empty: need T rows of K factor values.');
  const T = returns.length;
  if (factors.length !== T)
    throw new GmmInputError('length-mismatch', `The returns have ${T} rows but the factors have ${factors.length}.`);
  const N = names.assetNames ? names.assetNames.length : returns[0].length;
  const K = names.factorNames ? names.factorNames.length : factors[0].length;
  if (N < K)
    throw new GmmInputError(
      'too-few-assets',
      `There are fewer test assets than factors (N = ${N} assets, K = ${K} factors): the SDF loadings are not identified; use at least ${K} test assets or fewer factors.`,
    );
  const aName = (j: number) => names.assetNames?.[j];
  const fName = (j: number) => names.factorNames?.[j];
  checkBlock(returns, N, 'returns', (j) => assetLabel(names, j), aName);
  checkBlock(factors, K, 'factors', (j) => factorLabel(names, j), fName);
  if (T <= N + K)
    throw new GmmInputError(
      'too-few-periods',
      `T = ${T} periods is too few for N = ${N} assets and K = ${K} factors: need T > N + K = ${N + K}.`,
    );
  checkConstant(returns, N, (j) => assetLabel(names, j), aName, 'asset');
  checkConstant(factors, K, (j) => factorLabel(names, j), fName, 'factor');
  checkCollinear(covarianceOf(factors, K), K, (k) => factorLabel(names, k), fName, 'factor');
  return { T, N, K };
}

function covarianceOf(rows: readonly (readonly number[])[], p: number): Float64Array {
  const T = rows.length;
  const mean = new Float64Array(p);
  for (const r of rows) for (let j = 0; j < p; j++) mean[j] += r[j];
  for (let j = 0; j < p; j++) mean[j] /= T;
  const S = new Float64Array(p * p);
  for (const r of rows)
    for (let a = 0; a < p; a++) {
      const da = r[a] - mean[a];
      for (let b = a; b < p; b++) S[a * p + b] += da * (r[b] - mean[b]);
    }
  for (let a = 0; a < p; a++) for (let b = a; b < p; b++) S[b * p + a] = S[a * p + b] /= T;
  return S;
}

/**
 * Throws naming the first series (in order) that is an exact linear combination of the earlier
 * ones, judged on the covariance matrix `cov` (p×p).
 */
export function checkCollinear(
  cov: Float64Array,
  p: number,
  label: (j: number) => string,
  rawName: (j: number) => string | undefined,
  kind: 'factor' | 'asset',
): void {
  const d = new Float64Array(p);
  for (let j = 0; j < p; j++) d[j] = Math.sqrt(Math.max(cov[j * p + j], 0));
  // correlation matrix
  const Rm = new Float64Array(p * p);
  for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) Rm[a * p + b] = cov[a * p + b] / (d[a] * d[b]);
  const L = new Float64Array(p * p);
  for (let j = 0; j < p; j++) {
    let piv = Rm[j * p + j];
    for (let k = 0; k < j; k++) piv -= L[j * p + k] * L[j * p + k];
    if (piv < COLLINEAR_TOL) {
      // name the earlier series it depends on: solve the regression on the first j series
      const coef = regressOnPrevious(L, p, j);
      const parts: string[] = [];
      for (let k = 0; k < j; k++) if (Math.abs(coef[k]) > 1e-8) parts.push(label(k));
      const on = parts.length ? parts.join(', ') : `the ${kind}s before it`;
      throw new GmmInputError(
        kind === 'factor' ? 'collinear-factor' : 'collinear-asset',
        `The ${kind} ${label(j)} is an exact linear combination of ${on} (1 − R² = ${piv.toExponential(2)}); drop one of them.`,
        { series: rawName(j) },
      );
    }
    const ljj = Math.sqrt(piv);
    L[j * p + j] = ljj;
    for (let i = j + 1; i < p; i++) {
      let s = Rm[i * p + j];
      for (let k = 0; k < j; k++) s -= L[i * p + k] * L[j * p + k];
      L[i * p + j] = s / ljj;
    }
  }
}

/** Coefficients of series j on series 0..j−1 in correlation units, from the partial Cholesky L. */
function regressOnPrevious(L: Float64Array, p: number, j: number): Float64Array {
  // R_prev = L_prev L_prev'; r = correlations of j with prev = L_prev · l_j (row j of L, first j entries)
  // β = R_prev^{-1} r = L_prev'^{-1} l_j
  const beta = new Float64Array(j);
  for (let k = 0; k < j; k++) beta[k] = L[j * p + k];
  for (let i = j - 1; i >= 0; i--) {
    let s = beta[i];
    for (let k = i + 1; k < j; k++) s -= L[k * p + i] * beta[k];
    beta[i] = s / L[i * p + i];
  }
  return beta;
}

/**
 * Adjusted p-values for many tests at once (the b tests across a ledger's factors or a sweep's
 * candidates): a factor picked from many is more often "significant" by luck.
 *
 * Formula (plain text). p_(1) ≤ … ≤ p_(n) the sorted p-values (i = 1..n).
 *   Holm (step-down, controls the family-wise error rate):
 *     p̃_(i) = min(1, max_{j ≤ i} (n − j + 1) p_(j)).
 *   Benjamini and Yekutieli (step-up, controls the false discovery rate under any dependence):
 *     c(n) = Σ_{j=1..n} 1/j,   p̃_(i) = min(1, min_{j ≥ i} p_(j) / ((j/n) / c(n))).
 * The adjusted values are monotone in the raw ones and put back in the input order. Ties get the
 * same adjusted value whatever their order (the running max / min absorbs them), the behaviour of
 * statsmodels' `multipletests` (methods 'holm' and 'fdr_by'), whose arithmetic is followed step by
 * step — p·(n − i + 1); p / ((i/n)/c(n)); c(n) summed pairwise in numpy's order — so that the
 * tests can compare to the last bit.
 *
 * Papers: Holm, S. (1979), "A Simple Sequentially Rejective Multiple Test Procedure",
 * Scandinavian Journal of Statistics 6(2), 65–70. Benjamini, Y. and Yekutieli, D. (2001), "The
 * Control of the False Discovery Rate in Multiple Testing under Dependency", Annals of Statistics
 * 29(4), 1165–1188. Hurdle: Harvey, C. R., Liu, Y. and Zhu, H. (2016), "… and the Cross-Section of
 * Expected Returns", Review of Financial Studies 29(1), 5–68.
 *
 * @example
 * holmAdjust([0.01, 0.04, 0.03]) // → [0.03, 0.06, 0.06]
 * benjaminiYekutieliAdjust([0.01, 0.04, 0.03]) // → [0.055, 0.0733…, 0.0733…] (c(3) = 11/6)
 */
import { GmmInputError } from './errors';

/**
 * The t ≥ 3.0 hurdle of Harvey, Liu and Zhu (2016) for a newly proposed factor, given how many
 * factors have been tried in the literature. A reference line to draw beside |t| — never a rule:
 * the product's verdicts rest on the user's level and basis, and the adjusted p-values are the
 * formal correction for the tests run here.
 */
export const HLZ_T_HURDLE = 3.0;

function check(p: readonly number[], what: string): void {
  if (!Array.isArray(p)) throw new GmmInputError('invalid-option', `${what}: the p-values must be an array of numbers.`);
  p.forEach((v, i) => {
    if (typeof v !== 'number' || !Number.isFinite(v) || v < 0 || v > 1)
      throw new GmmInputError('invalid-option', `${what}: p-value ${i + 1} is ${String(v)}; every p-value must be a number from 0 to 1.`, { row: i });
  });
}

/** Indices that sort p ascending (stable; ties do not change the adjusted values). */
function order(p: readonly number[]): number[] {
  return p.map((_, i) => i).sort((a, b) => p[a] - p[b] || a - b);
}

/**
 * Σ x_i in the pairwise order of numpy's add.reduce (blocks of 8 accumulators up to 128 values,
 * halves above), more accurate than a running sum and the same number numpy computes.
 */
export function pairwiseSum(x: ArrayLike<number>, from = 0, n = x.length - from): number {
  if (n < 8) {
    let s = 0;
    for (let i = 0; i < n; i++) s += x[from + i];
    return s;
  }
  if (n <= 128) {
    const r = [0, 1, 2, 3, 4, 5, 6, 7].map((j) => x[from + j]);
    let i = 8;
    for (; i < n - (n % 8); i += 8) for (let j = 0; j < 8; j++) r[j] += x[from + i + j];
    let s = r[0] + r[1] + (r[2] + r[3]) + (r[4] + r[5] + (r[6] + r[7]));
    for (; i < n; i++) s += x[from + i];
    return s;
  }
  let n2 = Math.floor(n / 2);
  n2 -= n2 % 8;
  return pairwiseSum(x, from, n2) + pairwiseSum(x, from + n2, n - n2);
}

/**
 * Holm (1979) step-down adjusted p-values, in the input order.
 * @throws GmmInputError when a p-value is not a number in [0, 1].
 */
export function holmAdjust(p: readonly number[]): number[] {
  check(p, 'Holm adjustment');
  const n = p.length;
  const idx = order(p);
  const out = new Array<number>(n);
  let run = -Infinity;
  for (let i = 0; i < n; i++) {
    run = Math.max(run, p[idx[i]] * (n - i));
    out[idx[i]] = Math.min(1, run);
  }
  return out;
}

/**
 * Benjamini and Yekutieli (2001) step-up adjusted p-values, in the input order.
 * @throws GmmInputError when a p-value is not a number in [0, 1].
 */
export function benjaminiYekutieliAdjust(p: readonly number[]): number[] {
  check(p, 'Benjamini–Yekutieli adjustment');
  const n = p.length;
  if (n === 0) return [];
  const cm = pairwiseSum(Float64Array.from({ length: n }, (_, j) => 1 / (j + 1)));
  const idx = order(p);
  const out = new Array<number>(n);
  let run = Infinity;
  for (let i = n - 1; i >= 0; i--) {
    const factor = (i + 1) / n / cm;
    run = Math.min(run, p[idx[i]] / factor);
    out[idx[i]] = Math.min(1, run);
  }
  return out;
}

/** Both adjustments of the same p-values. */
export interface AdjustedPValues {
  readonly holm: readonly number[];
  readonly by: readonly number[];
}

/** Holm and Benjamini–Yekutieli adjusted p-values of the same family of tests. */
export function adjustPValues(p: readonly number[]): AdjustedPValues {
  return { holm: holmAdjust(p), by: benjaminiYekutieliAdjust(p) };
}

/**
 * Subset sweep: every non-empty subset of up to 15 candidate factors estimated on the same test
 * assets and data, ranked by the HJ distance and by the χ² drop test against the full model.
 *
 * Formula (plain text). X = C (centred) or D (uncentred), N×K for all K candidates; a subset s
 * uses the columns X_s. For a weighting W let A = X'WX (K×K), c = X'W E_T[R] (K), q0 = E_T[R]'W E_T[R].
 * The minimised objective of subset s is Q_W(s) = min_b g_s(b)'W g_s(b) = q0 − c_s' A_ss^{-1} c_s.
 *   HJ distance (Hansen and Jagannathan 1997): W = (E_T[RR'])^{-1}, HJ(s) = sqrt(Q_W(s)); the same
 *     weighting for every subset, so the distances are comparable across models.
 *   Drop test against the full model (Newey and West 1987): W* = Ŝ_u^{-1} from the full model's
 *     second stage (or its last iterate when `stage` is 'iterated', as the ledger's drop test); D(s) = T (Q_W*(s) − Q_W*(all)) ~ χ²(K − |s|) (the test that the factors outside
 *     s can be dropped, with the full model's weighting for both).
 * The N×N work (E_T[RR'], its inverse, Ŝ_u, the products A and c) is done once; each subset costs
 * one |s|×|s| Cholesky solve. HJ(s) equals hjDistance on the subset's own moments and D(s) equals
 * the ledger's joint drop test of the complement (tests assert both).
 *
 * Papers: Hansen, L. P. and Jagannathan, R. (1997), "Assessing Specification Errors in Stochastic
 * Discount Factor Models", Journal of Finance 52(2), 557–590. Newey, W. K. and West, K. D.
 * (1987), "Hypothesis Testing with Efficient Method of Moments Estimation", International
 * Economic Review 28(3), 777–787. Hansen, L. P. (1982), Econometrica 50(4), 1029–1054.
 *
 * @example
 * // Subset masks: bit k set = factor k in the model; K = 3 gives masks 1..7.
 * subsetFactors(5, ['A', 'B', 'C']) // → ['A', 'C']
 */
import { chiSquareSf } from './distributions';
import { GmmInputError } from './errors';
import { dropWeighting, weightProducts } from './drop-test';
import { resolveLag } from './hac';
import { cholesky, choleskyInverse, choleskySolve, fromNested } from './linalg';
import { momentsFromPacked, secondMomentMatrix } from './moments';
import { fitSdfGmm, type FirstStageWeighting, type SdfForm } from './sdf-gmm';
import { validateMatrices } from './validate';

/** Largest number of candidate factors (2^15 − 1 = 32,767 models). */
export const MAX_SWEEP_FACTORS = 15;

export interface SubsetSweepOptions {
  readonly lags: number | 'auto';
  readonly form: SdfForm;
  readonly factorMeansKnown: boolean;
  /** First-stage weighting of the full model's two-step estimate (its Ŝ_u gives W*). */
  readonly weighting: FirstStageWeighting;
  /** How the full model is estimated for W*: two-step (default) or iterated, matching the run's ledger. */
  readonly stage?: 'second' | 'iterated';
  /** Level for "not rejected against the full model" (default 0.05). */
  readonly level?: number;
  /** How many models per size to list and to count factor appearances in (default 5). */
  readonly topPerSize?: number;
}

export interface SubsetSweepInput {
  readonly returns: readonly (readonly number[])[];
  readonly factors: readonly (readonly number[])[];
  readonly factorNames: readonly string[];
  readonly options: SubsetSweepOptions;
}

/** Shared, precomputed quantities (plain arrays: can be sent to worker threads). */
export interface SweepPlan {
  readonly T: number;
  readonly N: number;
  readonly K: number;
  readonly lags: number;
  readonly factorNames: readonly string[];
  /** HJ weighting: A, c, q0. */
  readonly hjA: Float64Array;
  readonly hjC: Float64Array;
  readonly hjQ0: number;
  /** Full model's second-stage weighting: A, c, q0, and Q_W*(all). */
  readonly wA: Float64Array;
  readonly wC: Float64Array;
  readonly wQ0: number;
  readonly wQFull: number;
}

/** One evaluated subset; null fields when its system is singular. */
export interface SweepRow {
  readonly mask: number;
  readonly size: number;
  readonly hj: number | null;
  readonly drop: number | null;
  readonly df: number;
  readonly p: number | null;
}

export interface SweepModel {
  readonly factors: readonly string[];
  readonly size: number;
  readonly hj: number;
  readonly drop: number;
  readonly df: number;
  readonly p: number;
}

export interface SubsetSweepResult {
  readonly T: number;
  readonly N: number;
  readonly K: number;
  readonly lags: number;
  readonly level: number;
  readonly models: number;
  readonly singular: number;
  /** Per size 1..K: the best models by HJ distance (ascending). */
  readonly bestByHj: readonly { readonly size: number; readonly models: readonly SweepModel[] }[];
  /** Per size 1..K: the best models by the drop test against the full model (smallest D). */
  readonly bestByDrop: readonly { readonly size: number; readonly models: readonly SweepModel[] }[];
  /** The smallest models the drop test does not reject at `level`, by size then HJ (up to 10). */
  readonly adequate: readonly SweepModel[];
  /** Share of the listed best-by-HJ models (all sizes) that contain each factor. */
  readonly factorFrequency: readonly { readonly name: string; readonly share: number; readonly count: number }[];
}

export function subsetFactors(mask: number, names: readonly string[]): string[] {
  return names.filter((_, k) => (mask >> k) & 1);
}

function products(X: Float64Array, W: Float64Array, meanR: Float64Array, N: number, K: number) {
  const { WX, WR } = weightProducts(X, W, meanR, N, K);
  const A = new Float64Array(K * K);
  const c = new Float64Array(K);
  for (let a = 0; a < K; a++) {
    for (let b = 0; b < K; b++) {
      let s = 0;
      for (let i = 0; i < N; i++) s += X[i * K + a] * WX[i * K + b];
      A[a * K + b] = s;
    }
    let s = 0;
    for (let i = 0; i < N; i++) s += X[i * K + a] * WR[i];
    c[a] = s;
  }
  let q0 = 0;
  for (let i = 0; i < N; i++) q0 += meanR[i] * WR[i];
  return { A, c, q0 };
}

/** Q(s) = q0 − c_s' A_ss^{-1} c_s; null when A_ss is singular. Scratch arrays reused. */
function objective(A: Float64Array, c: Float64Array, q0: number, K: number, idx: Int32Array, k: number, As: Float64Array, cs: Float64Array): number | null {
  for (let a = 0; a < k; a++) {
    cs[a] = c[idx[a]];
    for (let b = 0; b < k; b++) As[a * k + b] = A[idx[a] * K + idx[b]];
  }
  const L = cholesky(As.subarray(0, k * k), k);
  if (!L) return null;
  const x = choleskySolve(L, k, cs.subarray(0, k), 1);
  let s = 0;
  for (let a = 0; a < k; a++) s += cs[a] * x[a];
  return q0 - s;
}

/**
 * Validate and precompute everything the subsets share.
 * @throws GmmInputError on malformed input, more than 15 candidates, or a singular full model.
 */
export function prepareSubsetSweep(input: SubsetSweepInput): SweepPlan {
  const { T, N, K } = validateMatrices(input.returns, input.factors, { factorNames: input.factorNames });
  if (K > MAX_SWEEP_FACTORS)
    throw new GmmInputError('invalid-option', `The subset sweep takes at most ${MAX_SWEEP_FACTORS} candidate factors; got ${K}.`);
  const o = input.options;
  const lags = resolveLag(o.lags, T);
  const m = momentsFromPacked(fromNested(input.returns, N), fromNested(input.factors, K), T, N, K);
  const second = secondMomentMatrix(m.R, T, N, m.Rcols);
  const Le = cholesky(second, N);
  if (!Le) throw new GmmInputError('collinear-asset', 'E_T[RR\'] is singular: the HJ distance cannot be computed (collinear test assets).');
  const Whj = choleskyInverse(Le, N);
  const X = o.form === 'centred' ? m.covRF : m.crossRF;
  const hj = products(X, Whj, m.meanR, N, K);
  const full = fitSdfGmm(m, { stage: o.stage ?? 'second', weighting: o.weighting, lags, form: o.form, factorMeansKnown: o.factorMeansKnown, secondMoment: second });
  if (!full.ok) throw new GmmInputError('invalid-option', `The full model cannot be estimated: ${full.message}`);
  const Wstar = dropWeighting(full);
  if (!Wstar) throw new GmmInputError('invalid-option', 'The full model cannot be estimated: its long-run covariance Ŝ is singular.');
  const w = products(X, Wstar, m.meanR, N, K);
  const all = Int32Array.from({ length: K }, (_, k) => k);
  const qFull = objective(w.A, w.c, w.q0, K, all, K, new Float64Array(K * K), new Float64Array(K));
  if (qFull === null) throw new GmmInputError('invalid-option', 'The full model is singular under its own weighting.');
  return { T, N, K, lags, factorNames: [...input.factorNames], hjA: hj.A, hjC: hj.c, hjQ0: hj.q0, wA: w.A, wC: w.c, wQ0: w.q0, wQFull: qFull };
}

/** Evaluate the subsets with masks in [fromMask, toMask) (masks 1..2^K − 1). */
export function evaluateSubsets(plan: SweepPlan, fromMask: number, toMask: number): SweepRow[] {
  const { K, T } = plan;
  const rows: SweepRow[] = [];
  const idx = new Int32Array(K);
  const As = new Float64Array(K * K);
  const cs = new Float64Array(K);
  const lo = Math.max(1, fromMask);
  const hi = Math.min(2 ** K, toMask);
  for (let mask = lo; mask < hi; mask++) {
    let k = 0;
    for (let j = 0; j < K; j++) if ((mask >> j) & 1) idx[k++] = j;
    const qh = objective(plan.hjA, plan.hjC, plan.hjQ0, K, idx, k, As, cs);
    const qw = objective(plan.wA, plan.wC, plan.wQ0, K, idx, k, As, cs);
    const df = K - k;
    if (qh === null || qw === null) {
      rows.push({ mask, size: k, hj: null, drop: null, df, p: null });
      continue;
    }
    const drop = df === 0 ? 0 : Math.max(0, T * (qw - plan.wQFull));
    rows.push({ mask, size: k, hj: Math.sqrt(Math.max(0, qh)), drop, df, p: chiSquareSf(drop, df) });
  }
  return rows;
}

/** Rank the rows (from any number of chunks) and summarise. */
export function summariseSubsetSweep(plan: SweepPlan, rows: readonly SweepRow[], options: Pick<SubsetSweepOptions, 'level' | 'topPerSize'> = {}): SubsetSweepResult {
  const level = options.level ?? 0.05;
  const top = options.topPerSize ?? 5;
  const names = plan.factorNames;
  const ok = rows.filter((r) => r.hj !== null) as (SweepRow & { hj: number; drop: number; p: number })[];
  const model = (r: (typeof ok)[number]): SweepModel => ({ factors: subsetFactors(r.mask, names), size: r.size, hj: r.hj, drop: r.drop, df: r.df, p: r.p });
  const bestByHj: { size: number; models: SweepModel[] }[] = [];
  const bestByDrop: { size: number; models: SweepModel[] }[] = [];
  const counts = new Array<number>(plan.K).fill(0);
  let listed = 0;
  for (let size = 1; size <= plan.K; size++) {
    const same = ok.filter((r) => r.size === size);
    const byHj = [...same].sort((a, b) => a.hj - b.hj || a.mask - b.mask).slice(0, top);
    const byDrop = [...same].sort((a, b) => a.drop - b.drop || a.mask - b.mask).slice(0, top);
    bestByHj.push({ size, models: byHj.map(model) });
    bestByDrop.push({ size, models: byDrop.map(model) });
    for (const r of byHj) {
      listed += 1;
      for (let k = 0; k < plan.K; k++) if ((r.mask >> k) & 1) counts[k] += 1;
    }
  }
  const adequate = ok
    .filter((r) => r.p > level)
    .sort((a, b) => a.size - b.size || a.hj - b.hj || a.mask - b.mask)
    .slice(0, 10)
    .map(model);
  return {
    T: plan.T,
    N: plan.N,
    K: plan.K,
    lags: plan.lags,
    level,
    models: rows.length,
    singular: rows.length - ok.length,
    bestByHj,
    bestByDrop,
    adequate,
    factorFrequency: names.map((name, k) => ({ name, count: counts[k], share: listed > 0 ? counts[k] / listed : 0 })),
  };
}

/**
 * The whole sweep in one call.
 * @param input returns T×N, factors T×K (K ≤ 15), names, options (lags, form, weighting, level, topPerSize).
 * @returns rankings by HJ distance and by the drop test against the full model, per size, and factor frequencies.
 * @throws GmmInputError on malformed input or more than 15 candidates.
 */
export function subsetSweep(input: SubsetSweepInput): SubsetSweepResult {
  const plan = prepareSubsetSweep(input);
  return summariseSubsetSweep(plan, evaluateSubsets(plan, 1, 2 ** plan.K), input.options);
}

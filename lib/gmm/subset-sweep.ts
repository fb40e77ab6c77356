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
 * Adjusted p per candidate: the b tests of the full model (its standard, influence-function SEs at
 * the full model's stage, two-step or iterated), t_k = b̂_k / se(b̂_k), adjusted across all K
 * candidates by Holm (1979) and Benjamini and Yekutieli (2001) (multiple-testing.ts).
 *
 * Ranking by the squared Sharpe ratio (traded candidates only; Barillas and Shanken 2017, RFS;
 * sharpe.ts): for every subset s made only of traded candidates, θ̂(s) = μ_s'Σ_s^{-1}μ_s from the
 * μ and Σ_f of all candidates, computed once. Subsets are visited in mask order, and the Cholesky
 * factor of Σ_s is built in the order of decreasing factor index, so consecutive masks share all
 * rows but the last: each θ̂(s) costs one new Cholesky row (O(|s|²)), θ̂ being the running sum of
 * the squares of L^{-1}μ_s. Standard errors se(θ̂) = sqrt(LRV(ψ)/T), ψ_t = 2u_t − u_t² + θ̂,
 * need a pass over the T periods each, so they are computed only for the models listed (the top
 * `thetaTop` by θ̂, the best of each size, the smallest models within one SE): all 32,767 would
 * cost more than the rest of the sweep. In-sample θ̂ never falls when a factor is added, so the
 * best is the full set of traded candidates; a subset is "within one SE" when θ̂(s) ≥ θ̂_best −
 * se(θ̂_best) (the one-standard-error rule, common practice), and the smallest such subsets are the
 * parsimonious choices. The difference of two listed models is tested with compareModels.
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
import { GmmInputError, gmmFailure, type GmmResult } from './errors';
import { benjaminiYekutieliAdjust, holmAdjust } from './multiple-testing';
import { seriesVarianceOfMean, squaredSharpeCore } from './sharpe';
import { waldSingle } from './wald';
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
  /** Rank the subsets of traded candidates by θ̂ (default true; needs `traded`). */
  readonly thetaRanking?: boolean;
  /** How many models to list by θ̂, with standard errors (default 20). */
  readonly thetaTop?: number;
}

export interface SubsetSweepInput {
  readonly returns: readonly (readonly number[])[];
  readonly factors: readonly (readonly number[])[];
  readonly factorNames: readonly string[];
  /** One flag per candidate; without it the θ̂ ranking is not computed (candidates' kind unknown). */
  readonly traded?: readonly boolean[];
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
  /** Full model's b̂ and standard SEs (K), for the adjusted p per candidate. */
  readonly fullB: Float64Array;
  readonly fullSeB: Float64Array;
  /** Traded flags (null when not given) and the bit mask of the non-traded candidates. */
  readonly traded: readonly boolean[] | null;
  readonly nonTradedMask: number;
  /** Whether evaluateSubsets computes θ̂. */
  readonly theta: boolean;
  /** Factor moments for θ̂: F (T×K row-major), μ, Σ_f (divisor T). */
  readonly F: Float64Array;
  readonly meanF: Float64Array;
  readonly sigmaF: Float64Array;
}

/** One evaluated subset; null fields when its system is singular. */
export interface SweepRow {
  readonly mask: number;
  readonly size: number;
  readonly hj: number | null;
  readonly drop: number | null;
  readonly df: number;
  readonly p: number | null;
  /** θ̂ = μ_s'Σ_s^{-1}μ_s (null: a non-traded candidate in s, no ranking asked, or singular). */
  readonly theta: number | null;
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
  /** The full model's b test per candidate with Holm and Benjamini–Yekutieli adjusted p across all K. */
  readonly candidates: readonly SweepCandidate[];
  /** Ranking by the squared Sharpe ratio of the factors (null with the reason in thetaNote). */
  readonly thetaRanking: SweepThetaRanking | null;
  readonly thetaNote: string | null;
}

export interface SweepCandidate {
  readonly name: string;
  /** null when the traded flags were not given. */
  readonly traded: boolean | null;
  readonly b: number;
  readonly seB: number;
  readonly tB: number;
  readonly pB: number;
  readonly pHolm: number;
  readonly pBY: number;
}

export interface SweepThetaModel {
  readonly factors: readonly string[];
  readonly size: number;
  readonly theta: number;
  readonly se: number;
  /** θ̂ ≥ θ̂_best − se(θ̂_best). */
  readonly withinOneSe: boolean;
}

export interface SweepThetaRanking {
  /** The traded candidates the ranked subsets are drawn from. */
  readonly candidates: readonly string[];
  /** Subsets ranked (all non-empty subsets of the traded candidates that are not singular). */
  readonly models: number;
  readonly best: SweepThetaModel;
  /** How many ranked subsets are within one SE of the best. */
  readonly withinOneSe: number;
  /** The top models by θ̂ (descending), with SEs. */
  readonly top: readonly SweepThetaModel[];
  /** Per size: the model with the highest θ̂. */
  readonly bestBySize: readonly SweepThetaModel[];
  /** The smallest subsets within one SE of the best (by θ̂, up to 10). */
  readonly smallestWithinOneSe: readonly SweepThetaModel[];
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
 * @returns `{ ok: true, plan }`, or a typed failure when the full model cannot be estimated
 *   (singular or not converged: the same on every try).
 * @throws GmmInputError on malformed input, more than 15 candidates, or collinear test assets.
 */
export function prepareSubsetSweep(input: SubsetSweepInput): GmmResult<{ plan: SweepPlan }> {
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
  if (!full.ok) return gmmFailure(full.code, `The full model cannot be estimated: ${full.message}`, full.matrix);
  const weighting = dropWeighting(full);
  if (!weighting.ok) return gmmFailure('singular', 'The full model cannot be estimated: its long-run covariance Ŝ is singular.', 'S');
  const w = products(X, weighting.W, m.meanR, N, K);
  const all = Int32Array.from({ length: K }, (_, k) => k);
  const qFull = objective(w.A, w.c, w.q0, K, all, K, new Float64Array(K * K), new Float64Array(K));
  if (qFull === null) return gmmFailure('singular', 'The full model is singular under its own weighting.', "X'WX");
  let traded: boolean[] | null = null;
  if (input.traded !== undefined) {
    if (!Array.isArray(input.traded) || input.traded.length !== K || input.traded.some((v) => typeof v !== 'boolean'))
      throw new GmmInputError('length-mismatch', `traded must have one true/false flag per candidate (${K}).`);
    traded = [...input.traded];
  }
  let nonTradedMask = 0;
  if (traded) traded.forEach((t, k) => { if (!t) nonTradedMask |= 1 << k; });
  const theta = traded !== null && o.thetaRanking !== false && traded.some(Boolean);
  const fullSeB = Float64Array.from({ length: K }, (_, k) => Math.sqrt(Math.max(0, full.covB[k * K + k])));
  const plan: SweepPlan = {
    T, N, K, lags, factorNames: [...input.factorNames], hjA: hj.A, hjC: hj.c, hjQ0: hj.q0, wA: w.A, wC: w.c, wQ0: w.q0, wQFull: qFull,
    fullB: Float64Array.from(full.b), fullSeB, traded, nonTradedMask, theta, F: m.F, meanF: m.meanF, sigmaF: m.sigmaF,
  };
  return { ok: true, plan };
}

/**
 * θ̂ of consecutive subsets by one Cholesky row each (see the module comment): the factor of Σ_s
 * is kept for the factors of s in decreasing index order; a new mask keeps the rows of the
 * factors it shares at the front with the previous one and adds the rest.
 */
class ThetaStack {
  private readonly L: Float64Array;
  private readonly z: Float64Array;
  private readonly cum: Float64Array;
  private readonly order: Int32Array;
  private depth = 0;
  /** Depth of the first singular row (rows from there on are invalid), or K + 1. */
  private bad: number;
  constructor(private readonly K: number, private readonly mu: Float64Array, private readonly S: Float64Array) {
    this.L = new Float64Array(K * K);
    this.z = new Float64Array(K);
    this.cum = new Float64Array(K);
    this.order = new Int32Array(K);
    this.bad = K + 1;
  }
  theta(mask: number): number | null {
    const { K, L, z, cum, order, mu, S } = this;
    // the factors of mask from the highest index down; keep the common prefix
    let d = 0;
    let keep = 0;
    let same = true;
    for (let j = K - 1; j >= 0; j--) {
      if (!((mask >> j) & 1)) continue;
      if (same && d < this.depth && order[d] === j) keep = d + 1;
      else same = false;
      d++;
    }
    // a singular row beyond the kept prefix is dropped with it
    if (this.bad >= keep) this.bad = K + 1;
    let depth = keep;
    let seen = 0;
    for (let j = K - 1; j >= 0; j--) {
      if (!((mask >> j) & 1)) continue;
      // the first `keep` factors (from the top) are the kept prefix
      if (seen++ < keep) continue;
      const row = depth * K;
      let piv = S[j * K + j];
      let zz = mu[j];
      for (let i = 0; i < depth; i++) {
        let v = S[j * K + order[i]];
        const ri = i * K;
        for (let l = 0; l < i; l++) v -= L[row + l] * L[ri + l];
        v /= L[ri + i];
        L[row + i] = v;
        piv -= v * v;
        zz -= v * z[i];
      }
      order[depth] = j;
      if (!(piv > SINGULAR_PIVOT * S[j * K + j])) {
        if (this.bad > depth) this.bad = depth;
        L[row + depth] = 1;
        z[depth] = 0;
        cum[depth] = 0;
      } else {
        const ljj = Math.sqrt(piv);
        L[row + depth] = ljj;
        z[depth] = zz / ljj;
        cum[depth] = (depth > 0 ? cum[depth - 1] : 0) + z[depth] * z[depth];
      }
      depth++;
    }
    this.depth = depth;
    return this.bad < depth ? null : cum[depth - 1];
  }
}

/** Relative Cholesky pivot below which a subset's Σ_s counts as singular (linalg's SINGULAR_TOL). */
const SINGULAR_PIVOT = 1e-13;

/** Evaluate the subsets with masks in [fromMask, toMask) (masks 1..2^K − 1). */
export function evaluateSubsets(plan: SweepPlan, fromMask: number, toMask: number): SweepRow[] {
  const { K, T } = plan;
  const rows: SweepRow[] = [];
  const idx = new Int32Array(K);
  const As = new Float64Array(K * K);
  const cs = new Float64Array(K);
  const lo = Math.max(1, fromMask);
  const hi = Math.min(2 ** K, toMask);
  const stack = plan.theta ? new ThetaStack(K, plan.meanF, plan.sigmaF) : null;
  for (let mask = lo; mask < hi; mask++) {
    let k = 0;
    for (let j = 0; j < K; j++) if ((mask >> j) & 1) idx[k++] = j;
    const qh = objective(plan.hjA, plan.hjC, plan.hjQ0, K, idx, k, As, cs);
    const qw = objective(plan.wA, plan.wC, plan.wQ0, K, idx, k, As, cs);
    const df = K - k;
    const theta = stack && (mask & plan.nonTradedMask) === 0 ? stack.theta(mask) : null;
    if (qh === null || qw === null) {
      rows.push({ mask, size: k, hj: null, drop: null, df, p: null, theta });
      continue;
    }
    const drop = df === 0 ? 0 : Math.max(0, T * (qw - plan.wQFull));
    rows.push({ mask, size: k, hj: Math.sqrt(Math.max(0, qh)), drop, df, p: chiSquareSf(drop, df), theta });
  }
  return rows;
}

/** Rank the rows (from any number of chunks) and summarise. */
export function summariseSubsetSweep(plan: SweepPlan, rows: readonly SweepRow[], options: Pick<SubsetSweepOptions, 'level' | 'topPerSize' | 'thetaTop'> = {}): SubsetSweepResult {
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
  const tests = names.map((_, k) => waldSingle(plan.fullB[k], plan.fullSeB[k]));
  const pHolm = holmAdjust(tests.map((t) => t.p));
  const pBY = benjaminiYekutieliAdjust(tests.map((t) => t.p));
  const candidates: SweepCandidate[] = names.map((name, k) => ({
    name,
    traded: plan.traded ? plan.traded[k] : null,
    b: tests[k].estimate,
    seB: tests[k].se,
    tB: tests[k].t,
    pB: tests[k].p,
    pHolm: pHolm[k],
    pBY: pBY[k],
  }));
  const { ranking, note } = thetaRanking(plan, rows, options.thetaTop ?? 20);
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
    candidates,
    thetaRanking: ranking,
    thetaNote: note,
  };
}

function thetaRanking(plan: SweepPlan, rows: readonly SweepRow[], top: number): { ranking: SweepThetaRanking | null; note: string | null } {
  if (!plan.traded) return { ranking: null, note: 'The candidates’ traded flags were not given, so the squared-Sharpe ranking was not computed.' };
  if (!plan.traded.some(Boolean)) return { ranking: null, note: 'No candidate is traded: the squared-Sharpe ranking needs traded factors.' };
  if (!plan.theta) return { ranking: null, note: 'The squared-Sharpe ranking was not asked for.' };
  // Linear passes, no sort of all rows (the sweep is benchmarked): the order is θ̂ descending, then
  // size, then mask.
  type Ranked = SweepRow & { theta: number };
  const before = (x: Ranked, y: Ranked) => x.theta > y.theta || (x.theta === y.theta && (x.size < y.size || (x.size === y.size && x.mask < y.mask)));
  const names = plan.factorNames;
  let count = 0;
  let bestRow: Ranked | null = null;
  const bySize: (Ranked | null)[] = new Array<Ranked | null>(plan.K + 1).fill(null);
  const keep = Math.max(1, top);
  const topRows: Ranked[] = [];
  for (const row of rows) {
    if (row.theta === null) continue;
    const r = row as Ranked;
    count += 1;
    if (!bestRow || before(r, bestRow)) bestRow = r;
    const cur = bySize[r.size];
    if (!cur || before(r, cur)) bySize[r.size] = r;
    if (topRows.length < keep || before(r, topRows[topRows.length - 1])) {
      let i = topRows.length;
      while (i > 0 && before(r, topRows[i - 1])) i--;
      topRows.splice(i, 0, r);
      if (topRows.length > keep) topRows.pop();
    }
  }
  if (!bestRow) return { ranking: null, note: 'Every subset of traded candidates is singular.' };
  const ses = new Map<number, number>();
  const seOf = (mask: number): number => {
    const hit = ses.get(mask);
    if (hit !== undefined) return hit;
    const idx = names.map((_, k) => k).filter((k) => (mask >> k) & 1);
    const core = squaredSharpeCore(plan.F, plan.T, plan.K, plan.meanF, plan.sigmaF, idx);
    const se = core.ok ? Math.sqrt(seriesVarianceOfMean(core.psi, plan.T, plan.lags)) : 0;
    ses.set(mask, se);
    return se;
  };
  const best = bestRow;
  const cut = best.theta - seOf(best.mask);
  const model = (r: Ranked): SweepThetaModel => ({
    factors: subsetFactors(r.mask, names),
    size: r.size,
    theta: r.theta,
    se: seOf(r.mask),
    withinOneSe: r.theta >= cut,
  });
  let within = 0;
  let minSize = plan.K + 1;
  for (const row of rows)
    if (row.theta !== null && row.theta >= cut) {
      within += 1;
      if (row.size < minSize) minSize = row.size;
    }
  const smallest = (rows.filter((r) => r.theta !== null && r.size === minSize && r.theta >= cut) as Ranked[]).sort((x, y) => (before(x, y) ? -1 : before(y, x) ? 1 : 0));
  const bestBySize = bySize.filter((r): r is Ranked => r !== null).map(model);
  return {
    ranking: {
      candidates: names.filter((_, k) => plan.traded![k]),
      models: count,
      best: model(best),
      withinOneSe: within,
      top: topRows.map(model),
      bestBySize,
      smallestWithinOneSe: smallest.slice(0, 10).map(model),
    },
    note: null,
  };
}

/**
 * The whole sweep in one call.
 * @param input returns T×N, factors T×K (K ≤ 15), names, traded flags (optional: needed for the θ̂
 *   ranking), options (lags, form, weighting, level, topPerSize, thetaRanking, thetaTop).
 * @returns rankings by HJ distance and by the drop test against the full model, per size, factor
 *   frequencies, the full model's b test per candidate with Holm / BY adjusted p, and the θ̂ ranking
 *   of the subsets of traded candidates (null with `thetaNote` saying why).
 *   As `{ ok: true, sweep }`, or the typed failure of {@link prepareSubsetSweep}.
 * @throws GmmInputError on malformed input or more than 15 candidates.
 */
export function subsetSweep(input: SubsetSweepInput): GmmResult<{ sweep: SubsetSweepResult }> {
  const prepared = prepareSubsetSweep(input);
  if (!prepared.ok) return prepared;
  const { plan } = prepared;
  return { ok: true, sweep: summariseSubsetSweep(plan, evaluateSubsets(plan, 1, 2 ** plan.K), input.options) };
}

/**
 * Subset sweep: every non-empty subset of up to 25 candidate factors estimated on the same test
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
 * The N×N work (E_T[RR'], its inverse, Ŝ_u, the products A and c) is done once. c_s' A_ss^{-1} c_s
 * is ‖L_s^{-1} c_s‖² with L_s the Cholesky factor of A_ss taken in decreasing factor index, so
 * consecutive masks share its leading rows and a subset costs about one new row (O(|s|²)) for each
 * of the two weightings, as θ̂ below (QuadFormStack). HJ(s) equals hjDistance on the subset's own
 * moments and D(s) equals the ledger's joint drop test of the complement (tests assert both, and
 * every subset against a direct solve).
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
 * Chunks and exact merge: a sweep over 2^K − 1 masks is cut into mask ranges [from, to); each
 * range gives a SweepPartial (sweepChunk) that holds only counts and bounded top lists (per size
 * the best \`topPerSize\` by HJ and by D, the first 10 adequate models, the best \`thetaTop\` by θ̂
 * and the best θ̂ per size), each under a strict total order ending in the mask, so partials merge
 * exactly in any order (mergeSweepPartials) and memory never grows with 2^K. The one-SE cut
 * θ̂_best − se(θ̂_best) depends on the whole sweep's best. That best is expected to be the set of
 * all traded candidates (θ̂ never falls when a factor is added), so the plan computes that subset's
 * cut first and every chunk counts the subsets within it as it goes. The summary checks the
 * guess: when the sweep's best is that subset, the cut is the same number and the counts are
 * exact; when it is not (rounding or ties can make a smaller subset the best), the summary counts
 * again in a second pass with the true cut (sweepWithinOneSe, θ̂ only, chunked and merged exactly).
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
import { cholesky, choleskyInverse, fromNested } from './linalg';
import { momentsFromPacked, secondMomentMatrix } from './moments';
import { fitSdfGmm, type FirstStageWeighting, type SdfForm } from './sdf-gmm';
import { validateMatrices } from './validate';

/**
 * Largest number of candidate factors lib/gmm takes (2^25 − 1 ≈ 33.5 million models; masks stay
 * below 2^31, so the bit operations on them are exact). The server allows fewer without queue
 * workers (shared/jobs.ts).
 */
export const MAX_SWEEP_FACTORS = 25;

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
  /** Level, models kept per size, models listed by θ̂ (resolved options). */
  readonly level: number;
  readonly topPerSize: number;
  readonly thetaTop: number;
  /** Whether evaluateSubsets computes θ̂. */
  readonly theta: boolean;
  /** Factor moments for θ̂: F (T×K row-major), μ, Σ_f (divisor T). */
  readonly F: Float64Array;
  readonly meanF: Float64Array;
  readonly sigmaF: Float64Array;
  /**
   * The expected best θ̂ subset — all traded candidates (in-sample θ̂ never falls when a factor is
   * added) — and its one-SE cut θ̂ − se(θ̂), so the first pass counts the subsets within one SE
   * (SweepPartial.within). Null without a θ̂ ranking or when that subset is singular. When the
   * sweep's best turns out to be another subset (rounding, ties), the summary makes the second
   * pass with the true cut instead.
   */
  readonly thetaGuess: { readonly mask: number; readonly cut: number } | null;
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

/**
 * Validate and precompute everything the subsets share.
 * @returns `{ ok: true, plan }`, or a typed failure when the full model cannot be estimated
 *   (singular or not converged: the same on every try).
 * @throws GmmInputError on malformed input, more than 25 candidates, bad level / topPerSize / thetaTop,
 *   or collinear test assets.
 */
export function prepareSubsetSweep(input: SubsetSweepInput): GmmResult<{ plan: SweepPlan }> {
  const { T, N, K } = validateMatrices(input.returns, input.factors, { factorNames: input.factorNames });
  if (K > MAX_SWEEP_FACTORS)
    throw new GmmInputError('invalid-option', `The subset sweep takes at most ${MAX_SWEEP_FACTORS} candidate factors; got ${K}.`);
  const o = input.options;
  const lags = resolveLag(o.lags, T);
  if (o.level !== undefined && !(o.level > 0 && o.level < 1)) throw new GmmInputError('invalid-option', `level must be between 0 and 1; got ${o.level}.`);
  if (o.topPerSize !== undefined && !(Number.isInteger(o.topPerSize) && o.topPerSize >= 1))
    throw new GmmInputError('invalid-option', `topPerSize must be a whole number of at least 1; got ${o.topPerSize}.`);
  if (o.thetaTop !== undefined && !(Number.isInteger(o.thetaTop) && o.thetaTop >= 0))
    throw new GmmInputError('invalid-option', `thetaTop must be a whole number of at least 0; got ${o.thetaTop}.`);
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
  // the full model's objective by the same stack as every subset's, so D(s) compares like with like
  const fullQuad = new QuadFormStack(K, w.c, w.A).value(2 ** K - 1);
  if (fullQuad === null) return gmmFailure('singular', 'The full model is singular under its own weighting.', "X'WX");
  const qFull = w.q0 - fullQuad;
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
  const base = {
    T, N, K, lags, factorNames: [...input.factorNames], hjA: hj.A, hjC: hj.c, hjQ0: hj.q0, wA: w.A, wC: w.c, wQ0: w.q0, wQFull: qFull,
    fullB: Float64Array.from(full.b), fullSeB, traded, nonTradedMask, theta,
    level: o.level ?? 0.05, topPerSize: o.topPerSize ?? 5, thetaTop: o.thetaTop ?? 20, F: m.F, meanF: m.meanF, sigmaF: m.sigmaF,
  };
  let thetaGuess: SweepPlan['thetaGuess'] = null;
  if (theta) {
    const mask = (2 ** K - 1) & ~nonTradedMask;
    // the value the sweep's stack gives this mask (a function of the mask alone)
    const best = new QuadFormStack(K, m.meanF, m.sigmaF).value(mask);
    if (best !== null) thetaGuess = { mask, cut: best - thetaSe(base, mask) };
  }
  return { ok: true, plan: { ...base, thetaGuess } };
}

/**
 * The quadratic form v_s' M_ss^{-1} v_s (M symmetric K×K, v of length K) of consecutive subsets by
 * one Cholesky row each (see the module comment): the factor of M_ss is kept for the factors of s
 * in decreasing index order; a new mask keeps the rows of the factors it shares at the front with
 * the previous one and adds the rest. The value is Σ z_i² with z = L^{-1} v_s, a function of the
 * mask alone (the kept rows were computed from the same leading factors). A subset is singular
 * when a pivot is not above SINGULAR_PIVOT times its own diagonal entry of M. Used for θ̂
 * (v = μ, M = Σ_f) and for the HJ and drop objectives (v = c, M = A).
 */
class QuadFormStack {
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
  /** v_s' M_ss^{-1} v_s of the subset `mask` (non-zero), or null when M_ss is singular. */
  value(mask: number): number | null {
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

/**
 * Calls `visit` for each subset with masks in [fromMask, toMask), in mask order, with its size, HJ
 * distance and drop statistic (both null when singular) and θ̂ (null when not ranked). Scalars, not
 * a row: the sweep allocates a row only for the few subsets its lists keep.
 */
function visitSubsets(
  plan: SweepPlan,
  fromMask: number,
  toMask: number,
  visit: (mask: number, size: number, hj: number | null, drop: number | null, theta: number | null) => void,
): void {
  const { K, T } = plan;
  const lo = Math.max(1, fromMask);
  const hi = Math.min(2 ** K, toMask);
  const hjStack = new QuadFormStack(K, plan.hjC, plan.hjA);
  const wStack = new QuadFormStack(K, plan.wC, plan.wA);
  const thetaStack = plan.theta ? new QuadFormStack(K, plan.meanF, plan.sigmaF) : null;
  for (let mask = lo; mask < hi; mask++) {
    let size = 0;
    for (let m = mask; m; m &= m - 1) size++;
    const ch = hjStack.value(mask);
    const cw = wStack.value(mask);
    const theta = thetaStack && (mask & plan.nonTradedMask) === 0 ? thetaStack.value(mask) : null;
    if (ch === null || cw === null) {
      visit(mask, size, null, null, theta);
      continue;
    }
    const drop = size === K ? 0 : Math.max(0, T * (plan.wQ0 - cw - plan.wQFull));
    visit(mask, size, Math.sqrt(Math.max(0, plan.hjQ0 - ch)), drop, theta);
  }
}

/** A subset's row; p is computed here (the χ² tail is the dearest part of a row). */
function makeRow(plan: SweepPlan, mask: number, size: number, hj: number | null, drop: number | null, theta: number | null): SweepRow {
  const df = plan.K - size;
  return { mask, size, hj, drop, df, p: drop === null ? null : chiSquareSf(drop, df), theta };
}

/**
 * Every row of the subsets with masks in [fromMask, toMask) (masks 1..2^K − 1). For inspecting a
 * few subsets; the sweep itself keeps only a mergeable partial (sweepChunk), never all rows.
 */
export function evaluateSubsets(plan: SweepPlan, fromMask: number, toMask: number): SweepRow[] {
  const rows: SweepRow[] = [];
  visitSubsets(plan, fromMask, toMask, (mask, size, hj, drop, theta) => rows.push(makeRow(plan, mask, size, hj, drop, theta)));
  return rows;
}

/**
 * What the summary needs from a set of subsets, in memory that does not grow with 2^K: counts and
 * bounded "top" lists under strict total orders (every order ends with the mask, which is unique),
 * so the top k of a union is the top k of the union of the parts' top k — partials of disjoint
 * mask ranges merge exactly, in any order, into the partial of the whole range (mergeSweepPartials).
 */
export interface SweepPartial {
  /** The mask ranges [from, to) covered, sorted and joined. */
  readonly ranges: readonly (readonly [number, number])[];
  /** Subsets evaluated, and how many of them are singular. */
  readonly models: number;
  readonly singular: number;
  /** Index size − 1: the best `topPerSize` subsets by (HJ, mask), and by (D, mask). */
  readonly bestByHj: readonly (readonly SweepRow[])[];
  readonly bestByDrop: readonly (readonly SweepRow[])[];
  /** The first 10 subsets with p > level by (size, HJ, mask). */
  readonly adequate: readonly SweepRow[];
  /** Subsets with a θ̂; the best `thetaTop` by (θ̂ descending, size, mask); the best per size (index size − 1). */
  readonly thetaCount: number;
  readonly thetaTop: readonly SweepRow[];
  readonly thetaBySize: readonly (SweepRow | null)[];
  /** The subsets within one SE under the plan's thetaGuess cut (null when the plan has none). */
  readonly within: SweepWithinPartial | null;
}

/** The θ̂ pass that needs the cut θ̂_best − se(θ̂_best) of the whole sweep (sweepWithinOneSe). */
export interface SweepWithinPartial {
  readonly ranges: readonly (readonly [number, number])[];
  /** Subsets with θ̂ ≥ cut. */
  readonly count: number;
  /** The smallest size among them (K + 1 when none), and its first 10 by (θ̂ descending, mask). */
  readonly minSize: number;
  readonly smallest: readonly SweepRow[];
}

type Ok = SweepRow & { hj: number; drop: number; p: number };
type Ranked = SweepRow & { theta: number };
/** Whether a subset (its scalars) comes before row b in each list's order. */
const hjBefore = (hj: number, mask: number, b: Ok) => hj < b.hj || (hj === b.hj && mask < b.mask);
const dropBefore = (drop: number, mask: number, b: Ok) => drop < b.drop || (drop === b.drop && mask < b.mask);
const adequateBefore = (size: number, hj: number, mask: number, b: Ok) => size < b.size || (size === b.size && hjBefore(hj, mask, b));
/** θ̂ descending, then size, then mask. */
const thetaBefore = (theta: number, size: number, mask: number, y: Ranked) =>
  theta > y.theta || (theta === y.theta && (size < y.size || (size === y.size && mask < y.mask)));
const byHj = (a: Ok, b: Ok) => hjBefore(a.hj, a.mask, b);
const byDrop = (a: Ok, b: Ok) => dropBefore(a.drop, a.mask, b);
const byAdequate = (a: Ok, b: Ok) => adequateBefore(a.size, a.hj, a.mask, b);
const byTheta = (x: Ranked, y: Ranked) => thetaBefore(x.theta, x.size, x.mask, y);

/** Inserts r into the list sorted by `before`, keeping at most `keep` entries. */
function keepTop<R>(list: R[], r: R, keep: number, before: (a: R, b: R) => boolean): void {
  if (list.length >= keep && !before(r, list[list.length - 1])) return;
  let i = list.length;
  while (i > 0 && before(r, list[i - 1])) i--;
  list.splice(i, 0, r);
  if (list.length > keep) list.pop();
}

function joinRanges(parts: readonly (readonly (readonly [number, number])[])[]): [number, number][] {
  const all = parts.flat().map(([a, b]) => [a, b] as [number, number]).sort((x, y) => x[0] - y[0]);
  const out: [number, number][] = [];
  for (const [a, b] of all) {
    const last = out[out.length - 1];
    if (last && a < last[1]) throw new GmmInputError('invalid-option', `Sweep chunks overlap: masks [${a}, ${b}) and [${last[0]}, ${last[1]}).`);
    if (last && a === last[1]) last[1] = b;
    else out.push([a, b]);
  }
  return out;
}

function clampRange(plan: SweepPlan, fromMask: number, toMask: number): [number, number] {
  if (!Number.isInteger(fromMask) || !Number.isInteger(toMask)) throw new GmmInputError('invalid-option', 'Sweep mask bounds must be whole numbers.');
  const lo = Math.max(1, fromMask);
  return [lo, Math.max(lo, Math.min(2 ** plan.K, toMask))];
}

/** A partial under construction (mutable; handed out as the readonly SweepPartial). */
interface PartialAcc {
  ranges: [number, number][];
  models: number;
  singular: number;
  bestByHj: SweepRow[][];
  bestByDrop: SweepRow[][];
  adequate: SweepRow[];
  thetaCount: number;
  thetaTop: SweepRow[];
  thetaBySize: (SweepRow | null)[];
  within: WithinAcc | null;
}

/** A second-pass partial under construction. */
interface WithinAcc {
  ranges: [number, number][];
  count: number;
  minSize: number;
  smallest: SweepRow[];
}

/** Folds a subset with θ̂ ≥ cut into a within-one-SE partial (the row is made only when kept). */
function addWithin(plan: SweepPlan, acc: WithinAcc, mask: number, size: number, theta: number): void {
  acc.count += 1;
  if (size > acc.minSize) return;
  if (size < acc.minSize) {
    acc.minSize = size;
    acc.smallest.length = 0;
  }
  const list = acc.smallest as Ranked[];
  if (list.length < 10 || thetaBefore(theta, size, mask, list[list.length - 1]))
    keepTop(list, { mask, size, hj: null, drop: null, df: plan.K - size, p: null, theta }, 10, byTheta);
}

/** An empty partial (the identity of the merge). */
function emptyPartial(plan: SweepPlan): PartialAcc {
  return {
    ranges: [],
    models: 0,
    singular: 0,
    bestByHj: Array.from({ length: plan.K }, () => []),
    bestByDrop: Array.from({ length: plan.K }, () => []),
    adequate: [],
    thetaCount: 0,
    thetaTop: [],
    thetaBySize: new Array<SweepRow | null>(plan.K).fill(null),
    within: plan.thetaGuess ? { ranges: [], count: 0, minSize: plan.K + 1, smallest: [] } : null,
  };
}

/**
 * Folds one subset into a partial under construction. Each list is asked first whether it would
 * take the subset (its scalars against the list's last row); the row, with its χ² p, is made only
 * when one does. The lists end up exactly as if every row had been offered to keepTop.
 */
function addSubset(plan: SweepPlan, acc: PartialAcc, mask: number, size: number, hj: number | null, drop: number | null, theta: number | null): void {
  acc.models += 1;
  let row: SweepRow | null = null;
  if (theta !== null) {
    acc.thetaCount += 1;
    const cur = acc.thetaBySize[size - 1] as Ranked | null;
    const top = acc.thetaTop as Ranked[];
    const keep = Math.max(1, plan.thetaTop);
    const bestOfSize = !cur || thetaBefore(theta, size, mask, cur);
    if (bestOfSize || top.length < keep || thetaBefore(theta, size, mask, top[top.length - 1])) {
      const r = (row = makeRow(plan, mask, size, hj, drop, theta)) as Ranked;
      if (bestOfSize) acc.thetaBySize[size - 1] = r;
      keepTop(top, r, keep, byTheta);
    }
    if (acc.within && theta >= plan.thetaGuess!.cut) addWithin(plan, acc.within, mask, size, theta);
  }
  if (hj === null || drop === null) {
    acc.singular += 1;
    return;
  }
  const keep = plan.topPerSize;
  const byH = acc.bestByHj[size - 1] as Ok[];
  if (byH.length < keep || hjBefore(hj, mask, byH[byH.length - 1])) keepTop(byH, (row ??= makeRow(plan, mask, size, hj, drop, theta)) as Ok, keep, byHj);
  const byD = acc.bestByDrop[size - 1] as Ok[];
  if (byD.length < keep || dropBefore(drop, mask, byD[byD.length - 1])) keepTop(byD, (row ??= makeRow(plan, mask, size, hj, drop, theta)) as Ok, keep, byDrop);
  const adequate = acc.adequate as Ok[];
  if (adequate.length < 10 || adequateBefore(size, hj, mask, adequate[adequate.length - 1])) {
    const p = row ? row.p! : chiSquareSf(drop, plan.K - size);
    if (p > plan.level) keepTop(adequate, (row ??= makeRow(plan, mask, size, hj, drop, theta)) as Ok, 10, byAdequate);
  }
}

/**
 * One chunk of the sweep: the subsets with masks in [fromMask, toMask), summarised as a
 * mergeable partial (memory O(K · topPerSize + thetaTop), whatever the range).
 */
export function sweepChunk(plan: SweepPlan, fromMask: number, toMask: number): SweepPartial {
  const [lo, hi] = clampRange(plan, fromMask, toMask);
  const acc = emptyPartial(plan);
  if (hi > lo) {
    acc.ranges.push([lo, hi]);
    acc.within?.ranges.push([lo, hi]);
  }
  visitSubsets(plan, lo, hi, (mask, size, hj, drop, theta) => addSubset(plan, acc, mask, size, hj, drop, theta));
  return acc;
}

/**
 * Merges partials of disjoint mask ranges (any number, any order) into the partial of their
 * union: counts add, each top list is the top of the parts' lists. Exact: the result equals the
 * partial that one sweepChunk over the union gives, bit for bit.
 * @throws GmmInputError when two parts cover the same masks.
 */
export function mergeSweepPartials(plan: SweepPlan, parts: readonly SweepPartial[]): SweepPartial {
  const acc = emptyPartial(plan);
  acc.ranges = joinRanges(parts.map((p) => p.ranges));
  for (const p of parts) {
    acc.models += p.models;
    acc.singular += p.singular;
    acc.thetaCount += p.thetaCount;
    for (let s = 0; s < plan.K; s++) {
      for (const r of p.bestByHj[s] ?? []) keepTop(acc.bestByHj[s] as Ok[], r as Ok, plan.topPerSize, byHj);
      for (const r of p.bestByDrop[s] ?? []) keepTop(acc.bestByDrop[s] as Ok[], r as Ok, plan.topPerSize, byDrop);
      const b = p.thetaBySize[s] as Ranked | null | undefined;
      const cur = acc.thetaBySize[s] as Ranked | null;
      if (b && (!cur || byTheta(b, cur))) acc.thetaBySize[s] = b;
    }
    for (const r of p.adequate) keepTop(acc.adequate as Ok[], r as Ok, 10, byAdequate);
    for (const r of p.thetaTop) keepTop(acc.thetaTop as Ranked[], r as Ranked, Math.max(1, plan.thetaTop), byTheta);
  }
  if (plan.thetaGuess) {
    const within = parts.map((p) => p.within);
    if (within.some((w) => !w)) throw new GmmInputError('invalid-option', 'A sweep chunk lacks its within-one-SE counts (made with another plan).');
    acc.within = mergeWithinPartials(plan, within as SweepWithinPartial[]) as WithinAcc;
  }
  return acc;
}

/** se(θ̂) of one subset: sqrt(LRV(ψ)/T), one pass over the T periods (0 when singular). */
function thetaSe(plan: Pick<SweepPlan, 'F' | 'T' | 'K' | 'meanF' | 'sigmaF' | 'lags'>, mask: number): number {
  const idx: number[] = [];
  for (let k = 0; k < plan.K; k++) if ((mask >> k) & 1) idx.push(k);
  const core = squaredSharpeCore(plan.F, plan.T, plan.K, plan.meanF, plan.sigmaF, idx);
  return core.ok ? Math.sqrt(seriesVarianceOfMean(core.psi, plan.T, plan.lags)) : 0;
}

/**
 * The one-SE cut θ̂_best − se(θ̂_best) of a whole sweep's partial (null without a θ̂ ranking). The
 * cut depends on every subset (through the best), so the subsets within it are found by a second
 * pass with the cut known (sweepWithinOneSe), not approximated from the first pass's lists.
 */
export function thetaCut(plan: SweepPlan, whole: SweepPartial): number | null {
  const best = whole.thetaTop[0] as Ranked | undefined;
  if (!plan.theta || !best) return null;
  return best.theta - thetaSe(plan, best.mask);
}

/**
 * Second pass over [fromMask, toMask) with the cut known: how many subsets of traded candidates
 * have θ̂ ≥ cut, the smallest size among them and its first 10 by (θ̂ descending, mask). Only θ̂
 * is recomputed (one Cholesky row per subset); it is a function of the mask alone, so it is the
 * first pass's value bit for bit.
 */
export function sweepWithinOneSe(plan: SweepPlan, cut: number, fromMask: number, toMask: number): SweepWithinPartial {
  const [lo, hi] = clampRange(plan, fromMask, toMask);
  const acc: WithinAcc = { ranges: hi > lo ? [[lo, hi]] : [], count: 0, minSize: plan.K + 1, smallest: [] };
  if (plan.theta) {
    const stack = new QuadFormStack(plan.K, plan.meanF, plan.sigmaF);
    for (let mask = lo; mask < hi; mask++) {
      if ((mask & plan.nonTradedMask) !== 0) continue;
      const theta = stack.value(mask);
      if (theta === null || !(theta >= cut)) continue;
      let size = 0;
      for (let m = mask; m; m &= m - 1) size++;
      addWithin(plan, acc, mask, size, theta);
    }
  }
  return acc;
}

/** Merges second-pass partials of disjoint ranges (any order), exactly. */
export function mergeWithinPartials(plan: SweepPlan, parts: readonly SweepWithinPartial[]): SweepWithinPartial {
  const ranges = joinRanges(parts.map((p) => p.ranges));
  let count = 0;
  let minSize = plan.K + 1;
  for (const p of parts) {
    count += p.count;
    if (p.count > 0 && p.minSize < minSize) minSize = p.minSize;
  }
  const smallest: Ranked[] = [];
  for (const p of parts) if (p.minSize === minSize) for (const r of p.smallest) keepTop(smallest, r as Ranked, 10, byTheta);
  return { ranges, count, minSize, smallest };
}

function assertWhole(plan: SweepPlan, ranges: readonly (readonly [number, number])[], what: string): void {
  const all = 2 ** plan.K;
  if (ranges.length !== 1 || ranges[0][0] !== 1 || ranges[0][1] !== all)
    throw new GmmInputError('invalid-option', `The ${what} covers masks ${ranges.map(([a, b]) => `[${a}, ${b})`).join(' ') || 'none'}, not all of [1, ${all}).`);
}

/**
 * Summarises the merged partial of the whole sweep (masks 1..2^K − 1). The within-one-SE figures
 * come from `within` (a merged second pass over all masks) when given; else from the first pass's
 * counts when the plan's thetaGuess is the sweep's best; else from one second pass here.
 * @throws GmmInputError when a partial does not cover every mask exactly once.
 */
export function summariseSubsetSweep(plan: SweepPlan, whole: SweepPartial, within?: SweepWithinPartial): SubsetSweepResult {
  assertWhole(plan, whole.ranges, 'sweep');
  const names = plan.factorNames;
  const model = (r: SweepRow): SweepModel => ({ factors: subsetFactors(r.mask, names), size: r.size, hj: r.hj!, drop: r.drop!, df: r.df, p: r.p! });
  const bestByHj: { size: number; models: SweepModel[] }[] = [];
  const bestByDrop: { size: number; models: SweepModel[] }[] = [];
  const counts = new Array<number>(plan.K).fill(0);
  let listed = 0;
  for (let size = 1; size <= plan.K; size++) {
    const hj = whole.bestByHj[size - 1];
    bestByHj.push({ size, models: hj.map(model) });
    bestByDrop.push({ size, models: whole.bestByDrop[size - 1].map(model) });
    for (const r of hj) {
      listed += 1;
      for (let k = 0; k < plan.K; k++) if ((r.mask >> k) & 1) counts[k] += 1;
    }
  }
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
  const { ranking, note } = thetaRanking(plan, whole, within);
  return {
    T: plan.T,
    N: plan.N,
    K: plan.K,
    lags: plan.lags,
    level: plan.level,
    models: whole.models,
    singular: whole.singular,
    bestByHj,
    bestByDrop,
    adequate: whole.adequate.map(model),
    factorFrequency: names.map((name, k) => ({ name, count: counts[k], share: listed > 0 ? counts[k] / listed : 0 })),
    candidates,
    thetaRanking: ranking,
    thetaNote: note,
  };
}

function thetaRanking(plan: SweepPlan, whole: SweepPartial, given?: SweepWithinPartial): { ranking: SweepThetaRanking | null; note: string | null } {
  if (!plan.traded) return { ranking: null, note: 'The candidates’ traded flags were not given, so the squared-Sharpe ranking was not computed.' };
  if (!plan.traded.some(Boolean)) return { ranking: null, note: 'No candidate is traded: the squared-Sharpe ranking needs traded factors.' };
  if (!plan.theta) return { ranking: null, note: 'The squared-Sharpe ranking was not asked for.' };
  const best = whole.thetaTop[0] as Ranked | undefined;
  if (!best) return { ranking: null, note: 'Every subset of traded candidates is singular.' };
  const names = plan.factorNames;
  const ses = new Map<number, number>();
  const seOf = (mask: number): number => {
    let se = ses.get(mask);
    if (se === undefined) ses.set(mask, (se = thetaSe(plan, mask)));
    return se;
  };
  const cut = best.theta - seOf(best.mask);
  // the first pass counted under the expected best's cut; when the best is that subset the cut is
  // the same number (θ̂ and se are functions of the mask), otherwise a second pass with this cut
  const counted = plan.thetaGuess && best.mask === plan.thetaGuess.mask ? whole.within : null;
  const within = given ?? counted ?? sweepWithinOneSe(plan, cut, 1, 2 ** plan.K);
  assertWhole(plan, within.ranges, 'second (within one SE) pass');
  const model = (r: SweepRow): SweepThetaModel => ({
    factors: subsetFactors(r.mask, names),
    size: r.size,
    theta: r.theta!,
    se: seOf(r.mask),
    withinOneSe: r.theta! >= cut,
  });
  return {
    ranking: {
      candidates: names.filter((_, k) => plan.traded![k]),
      models: whole.thetaCount,
      best: model(best),
      withinOneSe: within.count,
      top: whole.thetaTop.map(model),
      bestBySize: whole.thetaBySize.filter((r): r is SweepRow => r !== null).map(model),
      smallestWithinOneSe: within.smallest.map(model),
    },
    note: null,
  };
}

/**
 * The whole sweep in one call: one chunk over every mask, then the summary.
 * @param input returns T×N, factors T×K (K ≤ 25), names, traded flags (optional: needed for the θ̂
 *   ranking), options (lags, form, weighting, level, topPerSize, thetaRanking, thetaTop).
 * @returns rankings by HJ distance and by the drop test against the full model, per size, factor
 *   frequencies, the full model's b test per candidate with Holm / BY adjusted p, and the θ̂ ranking
 *   of the subsets of traded candidates (null with `thetaNote` saying why).
 *   As `{ ok: true, sweep }`, or the typed failure of {@link prepareSubsetSweep}.
 * @throws GmmInputError on malformed input or more than 25 candidates.
 */
export function subsetSweep(input: SubsetSweepInput): GmmResult<{ sweep: SubsetSweepResult }> {
  const prepared = prepareSubsetSweep(input);
  if (!prepared.ok) return prepared;
  return { ok: true, sweep: summariseSubsetSweep(prepared.plan, sweepChunk(prepared.plan, 1, 2 ** prepared.plan.K)) };
}

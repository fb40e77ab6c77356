/**
 * Bootstrap p-values for the SDF model's J test, the Wald z-test on each b, and each factor's
 * χ² drop test, by resampling under the null with recentred moments.
 *
 * Formula (plain text). Centred form, g_T(b) = E_T[R] − C b, original estimate b̂, pricing errors
 * α̂ = g_T(b̂). Each draw resamples the T periods (iid: T indices uniform on 1..T; moving block:
 * blocks of ℓ consecutive periods with uniform starts on 1..T−ℓ+1, concatenated and cut to T).
 * Recentring (Hall and Horowitz 1996): the bootstrap moment is g*(b) = g*_T(b) − g_T(b̄), b̄ the
 * original-sample value at which the null is imposed, so that the null holds exactly in the
 * bootstrap population. In the centred form g_T(b) − g_T(b̄) is obtained by shifting every
 * resampled return row by −g_T(b̄): the mean, the moment series h_t and hence Ŝ* all carry the
 * recentring (C is shift-invariant).
 *   J:     b̄ = b̂; J* = the J statistic of the same estimator (same stage, weighting and lag) on the
 *          recentred draw; p = (1 + #{J* ≥ J}) / (B' + 1).
 *   Wald:  the bootstrap population's b is b̂, so t*_k = (b*_k − b̂_k) / se*(b*_k) (the bootstrap-t
 *          pivot; se* by the same influence-function formula as the original);
 *          p = (1 + #{|t*_k| ≥ |t_k|}) / (B' + 1).
 *   Drop:  b̄ = b̃^(k), the original-sample restricted estimate (b_k = 0) under the original common
 *          weighting W* = Ŝ_u^{-1}; in the draw, D*_k = T (g_r*' W** g_r* − g_u*' W** g_u*) with
 *          the draw's mean shifted by −g_T(b̃^(k)) and W** the draw's own second-stage weighting;
 *          p = (1 + #{D*_k ≥ D_k}) / (B' + 1). Reported at the second and iterated stages only.
 * B' counts the draws whose estimation succeeded (a singular draw is skipped and counted).
 * Every draw uses its own generator seeded from (seed, draw index), so the numbers do not depend
 * on how the draws are split into chunks or threads.
 *
 * Block length: user's choice, else the rule ℓ = ceil(T^(1/3)) (Hall, Horowitz and Jing 1995,
 * Biometrika 82(3), 561–574, give T^(1/3) as the MSE-optimal rate for distribution functions;
 * using the rate with constant 1 is common practice). Moving blocks: Künsch, H. R. (1989),
 * "The Jackknife and the Bootstrap for General Stationary Observations", Annals of Statistics
 * 17(3), 1217–1241. The moving-block recentring here is at the full-sample moments (common
 * practice); Hall and Horowitz also adjust Ŝ* for the blocking, which is not done here.
 *
 * Papers: Hall, P. and Horowitz, J. L. (1996), "Bootstrap Critical Values for Tests Based on
 * Generalized-Method-of-Moments Estimators", Econometrica 64(4), 891–916. Hansen, L. P. (1982),
 * Econometrica 50(4), 1029–1054 (J). Newey, W. K. and West, K. D. (1987), International
 * Economic Review 28(3), 777–787 (drop test). Generator: mulberry32 (T. Ettinger, public-domain
 * 32-bit generator; common practice for small seeded simulations), seeded per draw through the
 * murmur3 32-bit finaliser (Appleby, public domain).
 *
 * Limits: the centred form only (shifting does not recentre the uncentred moment R_t(1 − f_t'b));
 * with factorMeansKnown the shift recentres the mean exactly and the moment series up to a term
 * ḡ·(f_t − μ*)'b of mean zero.
 *
 * @example
 * // The generator is reproducible: mulberry32(1)() is 0.6270739405881613 on every platform.
 * // bootstrapResample(5, 'iid', 1, mulberry32(7)) → five indices in 0..4 (the same on every run).
 */
import { chiSquareSf, normalTwoSidedP } from './distributions';
import { GmmInputError } from './errors';
import { defaultLag } from './hac';
import { dropTester } from './drop-test';
import { fromNested, spdSolve } from './linalg';
import { momentsFromPacked, secondMomentMatrix, type MomentData } from './moments';
import { fitSdfGmm, type FirstStageWeighting, type GmmStage, type SdfGmmFit } from './sdf-gmm';
import { validateMatrices } from './validate';
import { mulberry32 } from './random';


/** murmur3's 32-bit finaliser of (seed, stream): the per-draw seed. */
export function streamSeed(seed: number, stream: number): number {
  let h = (seed ^ Math.imul(stream + 1, 0x9e3779b9)) >>> 0;
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

export type BootstrapScheme = 'iid' | 'block';

/** The rule ℓ = ceil(T^(1/3)) (see the module comment). */
export function defaultBlockLength(T: number): number {
  return Math.max(1, Math.ceil(Math.cbrt(T) - 1e-12));
}

/** One draw of T period indices (0-based). */
export function bootstrapResample(T: number, scheme: BootstrapScheme, blockLength: number, u: () => number): Int32Array {
  const idx = new Int32Array(T);
  if (scheme === 'iid' || blockLength <= 1) {
    for (let t = 0; t < T; t++) idx[t] = Math.min(T - 1, Math.floor(u() * T));
    return idx;
  }
  const starts = T - blockLength + 1;
  let t = 0;
  while (t < T) {
    const s = Math.min(starts - 1, Math.floor(u() * starts));
    for (let j = 0; j < blockLength && t < T; j++) idx[t++] = s + j;
  }
  return idx;
}

export interface BootstrapOptions {
  readonly stage: GmmStage;
  readonly weighting: FirstStageWeighting;
  readonly lags: number | 'auto';
  /** Only 'centred' is supported (see the module comment). */
  readonly form: 'centred' | 'uncentred';
  readonly factorMeansKnown: boolean;
  readonly scheme: BootstrapScheme;
  /** Block length for scheme 'block'; default ceil(T^(1/3)). */
  readonly blockLength?: number;
  /** Number of draws B (default 999). */
  readonly draws?: number;
  readonly seed: number;
}

export interface BootstrapInput {
  /** T×N excess returns (decimals). */
  readonly returns: readonly (readonly number[])[];
  /** T×K factors. */
  readonly factors: readonly (readonly number[])[];
  readonly factorNames: readonly string[];
  readonly options: BootstrapOptions;
}

/** Everything a chunk of draws needs, computed once from the original sample. */
export interface BootstrapPlan {
  readonly T: number;
  readonly N: number;
  readonly K: number;
  readonly lags: number;
  readonly draws: number;
  readonly blockLength: number;
  readonly m: MomentData;
  readonly fit: SdfGmmFit;
  /** Observed statistics. */
  readonly J: number;
  readonly tB: Float64Array;
  /** Observed drop statistics per factor (null at the first stage). */
  readonly drop: Float64Array | null;
  /** Original pricing errors α̂ = g_T(b̂) (J/Wald recentring). */
  readonly alpha: Float64Array;
  /** Restricted pricing errors g_T(b̃^(k)) per factor, K×N (drop recentring); null at the first stage. */
  readonly alphaRestricted: Float64Array | null;
}

/** Raw bootstrap statistics of the draws [from, to); NaN-free (failed draws are only counted). */
export interface BootstrapBatch {
  readonly from: number;
  readonly to: number;
  readonly failed: number;
  readonly J: number[];
  /** t*_k per successful draw (K each). */
  readonly t: number[][];
  /** D*_k per successful draw (K each); empty at the first stage. */
  readonly drop: number[][];
}

export interface BootstrapPValue {
  readonly stat: number;
  readonly asymptoticP: number;
  readonly bootstrapP: number;
  /** Bootstrap critical value at 5% (95th percentile of the bootstrap statistic). */
  readonly critical95: number;
}

export interface BootstrapFactorResult {
  readonly name: string;
  readonly b: number;
  readonly wald: BootstrapPValue;
  readonly drop: BootstrapPValue | null;
}

export interface BootstrapResult {
  readonly T: number;
  readonly N: number;
  readonly K: number;
  readonly scheme: BootstrapScheme;
  readonly blockLength: number;
  readonly draws: number;
  readonly validDraws: number;
  readonly failedDraws: number;
  readonly seed: number;
  readonly lags: number;
  readonly stage: GmmStage;
  readonly J: BootstrapPValue & { readonly df: number };
  readonly factors: readonly BootstrapFactorResult[];
  /** Deciles (10%..90%) of J*, for a plot of the bootstrap distribution. */
  readonly jDeciles: readonly number[];
  readonly notes: readonly string[];
}

function restrictedErrors(m: MomentData, fit: SdfGmmFit, k: number): Float64Array | null {
  // b̃ = argmin g'W*g with b_k = 0, same W* as the drop test; return g_T(b̃).
  const { N, K, meanR } = m;
  const keep = Array.from({ length: K }, (_, j) => j).filter((j) => j !== k);
  const X = fit.X;
  const W = fit.W;
  const out = Float64Array.from(meanR);
  if (keep.length === 0) return out;
  const q = keep.length;
  const WX = new Float64Array(N * q);
  for (let i = 0; i < N; i++)
    for (let j = 0; j < N; j++) {
      const w = W[i * N + j];
      if (w === 0) continue;
      for (let a = 0; a < q; a++) WX[i * q + a] += w * X[j * K + keep[a]];
    }
  const A = new Float64Array(q * q);
  const rhs = new Float64Array(q);
  for (let a = 0; a < q; a++) {
    for (let c = 0; c < q; c++) {
      let s = 0;
      for (let i = 0; i < N; i++) s += X[i * K + keep[a]] * WX[i * q + c];
      A[a * q + c] = s;
    }
    let s = 0;
    for (let i = 0; i < N; i++) s += WX[i * q + a] * meanR[i];
    rhs[a] = s;
  }
  const b = spdSolve(A, q, rhs, 1);
  if (!b) return null;
  for (let i = 0; i < N; i++) {
    let s = meanR[i];
    for (let a = 0; a < q; a++) s -= X[i * K + keep[a]] * b[a];
    out[i] = s;
  }
  return out;
}

function seOf(fit: SdfGmmFit, k: number): number {
  return Math.sqrt(Math.max(0, fit.covB[k * fit.K + k]));
}

/**
 * Validate the input and compute the original estimate, the observed statistics and the
 * recentring vectors.
 * @throws GmmInputError on malformed input, an unsupported form or option out of range;
 *   on a singular original fit (the run itself could not have finished).
 */
export function prepareBootstrap(input: BootstrapInput): BootstrapPlan {
  const { T, N, K } = validateMatrices(input.returns, input.factors, { factorNames: input.factorNames });
  const o = input.options;
  if (o.form !== 'centred')
    throw new GmmInputError('invalid-option', 'The bootstrap supports the centred SDF form only (recentring the uncentred moments is not implemented).');
  const draws = o.draws ?? 999;
  if (!Number.isInteger(draws) || draws < 19 || draws > 100_000)
    throw new GmmInputError('invalid-option', `draws must be an integer from 19 to 100000; got ${String(o.draws)}.`);
  if (!Number.isInteger(o.seed) || o.seed < 0 || o.seed > 0xffffffff)
    throw new GmmInputError('invalid-option', `seed must be an integer from 0 to 4294967295; got ${String(o.seed)}.`);
  const lags = o.lags === 'auto' ? defaultLag(T) : o.lags;
  if (!Number.isInteger(lags) || lags < 0 || lags >= T)
    throw new GmmInputError('invalid-lags', `lags must be 'auto' or an integer from 0 to ${T - 1}; got ${String(o.lags)}.`);
  const blockLength = o.scheme === 'block' ? (o.blockLength ?? defaultBlockLength(T)) : 1;
  if (o.scheme !== 'iid' && o.scheme !== 'block')
    throw new GmmInputError('invalid-option', `scheme must be iid or block; got '${String(o.scheme)}'.`);
  if (!Number.isInteger(blockLength) || blockLength < 1 || blockLength > Math.floor(T / 2))
    throw new GmmInputError('invalid-option', `blockLength must be an integer from 1 to ${Math.floor(T / 2)} (T/2); got ${String(o.blockLength)}.`);
  const m = momentsFromPacked(fromNested(input.returns, N), fromNested(input.factors, K), T, N, K);
  const fit = fitSdfGmm(m, { stage: o.stage, weighting: o.weighting, lags, form: 'centred', factorMeansKnown: o.factorMeansKnown });
  if (!fit.ok) throw new GmmInputError('invalid-option', `The model cannot be estimated on these data: ${fit.message}`);
  const tB = Float64Array.from({ length: K }, (_, k) => {
    const se = seOf(fit, k);
    return se > 0 ? fit.b[k] / se : 0;
  });
  let drop: Float64Array | null = null;
  let alphaRestricted: Float64Array | null = null;
  if (o.stage !== 'first') {
    const tester = dropTester({ T, N, K, X: fit.X, W: fit.W, meanR: m.meanR });
    drop = new Float64Array(K);
    alphaRestricted = new Float64Array(K * N);
    for (let k = 0; k < K; k++) {
      drop[k] = tester([k])?.stat ?? 0;
      const g = restrictedErrors(m, fit, k);
      if (!g) throw new GmmInputError('invalid-option', `The model without '${input.factorNames[k]}' is singular; its drop test cannot be bootstrapped.`);
      alphaRestricted.set(g, k * N);
    }
  }
  return { T, N, K, lags, draws, blockLength, m, fit, J: fit.J.stat, tB, drop, alpha: fit.alpha, alphaRestricted };
}

/**
 * Run the draws [from, to) of a plan. Deterministic in (seed, draw index).
 * @param onDraw optional callback after each draw (progress).
 */
export function runBootstrapDraws(plan: BootstrapPlan, options: BootstrapOptions, from: number, to: number, onDraw?: (done: number) => void): BootstrapBatch {
  const { T, N, K, m, fit, lags } = plan;
  const R = m.R;
  const F = m.F;
  const J: number[] = [];
  const t: number[][] = [];
  const drop: number[][] = [];
  let failed = 0;
  const meanShifted = new Float64Array(N);
  for (let d = from; d < to; d++) {
    const u = mulberry32(streamSeed(options.seed, d));
    const idx = bootstrapResample(T, options.scheme, plan.blockLength, u);
    // Fresh arrays every draw: lib/gmm caches derived copies of a data array by its identity.
    const Rs = new Float64Array(T * N);
    const Fs = new Float64Array(T * K);
    for (let r = 0; r < T; r++) {
      const src = idx[r];
      const ro = r * N;
      const so = src * N;
      for (let i = 0; i < N; i++) Rs[ro + i] = R[so + i] - plan.alpha[i];
      const fo = r * K;
      const sf = src * K;
      for (let k = 0; k < K; k++) Fs[fo + k] = F[sf + k];
    }
    const ms = momentsFromPacked(Rs, Fs, T, N, K);
    let second: Float64Array | undefined;
    if (options.weighting === 'second-moment') {
      // E*[R R'] of the resampled (unshifted) returns.
      const Ru = new Float64Array(T * N);
      for (let r = 0; r < T; r++) for (let i = 0; i < N; i++) Ru[r * N + i] = Rs[r * N + i] + plan.alpha[i];
      second = secondMomentMatrix(Ru, T, N);
    }
    const f = fitSdfGmm(ms, { stage: options.stage, weighting: options.weighting, lags, form: 'centred', factorMeansKnown: options.factorMeansKnown, secondMoment: second });
    if (!f.ok) {
      failed += 1;
      onDraw?.(d - from + 1);
      continue;
    }
    const tRow: number[] = [];
    for (let k = 0; k < K; k++) {
      const se = seOf(f, k);
      tRow.push(se > 0 ? (f.b[k] - fit.b[k]) / se : 0);
    }
    let dRow: number[] | null = null;
    if (plan.alphaRestricted) {
      dRow = [];
      for (let k = 0; k < K; k++) {
        // mean of the draw recentred at the restricted original estimate
        for (let i = 0; i < N; i++) meanShifted[i] = ms.meanR[i] + plan.alpha[i] - plan.alphaRestricted[k * N + i];
        const r = dropTester({ T, N, K, X: ms.covRF, W: f.W, meanR: meanShifted })([k]);
        if (!r) break;
        dRow.push(r.stat);
      }
      if (dRow.length !== K) {
        failed += 1;
        onDraw?.(d - from + 1);
        continue;
      }
    }
    J.push(f.J.stat);
    t.push(tRow);
    if (dRow) drop.push(dRow);
    onDraw?.(d - from + 1);
  }
  return { from, to, failed, J, t, drop };
}

function bootP(count: number, valid: number): number {
  return valid > 0 ? (1 + count) / (valid + 1) : 1;
}

function quantile(sorted: readonly number[], q: number): number {
  if (sorted.length === 0) return 0;
  const pos = q * (sorted.length - 1);
  const lo = Math.floor(pos);
  const hi = Math.min(sorted.length - 1, lo + 1);
  return sorted[lo] + (sorted[hi] - sorted[lo]) * (pos - lo);
}

/** Combine batches (any order, any split) into the bootstrap result. */
export function summariseBootstrap(plan: BootstrapPlan, input: BootstrapInput, batches: readonly BootstrapBatch[]): BootstrapResult {
  const sorted = [...batches].sort((a, b) => a.from - b.from);
  const J = sorted.flatMap((b) => b.J);
  const t = sorted.flatMap((b) => b.t);
  const drop = sorted.flatMap((b) => b.drop);
  const failed = sorted.reduce((s, b) => s + b.failed, 0);
  const valid = J.length;
  const o = input.options;
  const Jsorted = [...J].sort((a, b) => a - b);
  const jStat = plan.J;
  const notes: string[] = [];
  if (o.stage === 'iterated') notes.push('Each draw repeats the iterated estimator (up to 100 weighting updates).');
  if (o.stage === 'first') notes.push('Drop tests need the second-stage weighting; they are not bootstrapped at the first stage.');
  if (o.scheme === 'block') notes.push(`Moving blocks of ${plan.blockLength} periods; recentred at the full-sample moments.`);
  if (failed > 0) notes.push(`${failed} draw(s) gave a singular system and were skipped.`);
  const factors: BootstrapFactorResult[] = input.factorNames.map((name, k) => {
    const tk = plan.tB[k];
    const absT = t.map((r) => Math.abs(r[k])).sort((a, b) => a - b);
    const waldCount = absT.filter((v) => v >= Math.abs(tk)).length;
    const se = seOf(plan.fit, k);
    const wald: BootstrapPValue = {
      stat: tk,
      asymptoticP: se > 0 ? 2 * normalSf(Math.abs(tk)) : 1,
      bootstrapP: bootP(waldCount, valid),
      critical95: quantile(absT, 0.95),
    };
    let dropP: BootstrapPValue | null = null;
    if (plan.drop) {
      const dk = plan.drop[k];
      const ds = drop.map((r) => r[k]).sort((a, b) => a - b);
      dropP = {
        stat: dk,
        asymptoticP: chiSq1Sf(dk),
        bootstrapP: bootP(ds.filter((v) => v >= dk).length, valid),
        critical95: quantile(ds, 0.95),
      };
    }
    return { name, b: plan.fit.b[k], wald, drop: dropP };
  });
  return {
    T: plan.T,
    N: plan.N,
    K: plan.K,
    scheme: o.scheme,
    blockLength: plan.blockLength,
    draws: plan.draws,
    validDraws: valid,
    failedDraws: failed,
    seed: o.seed,
    lags: plan.lags,
    stage: o.stage,
    J: {
      stat: jStat,
      df: plan.fit.J.df,
      asymptoticP: plan.fit.J.p,
      bootstrapP: bootP(J.filter((v) => v >= jStat).length, valid),
      critical95: quantile(Jsorted, 0.95),
    },
    factors,
    jDeciles: [0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9].map((q) => quantile(Jsorted, q)),
    notes,
  };
}

function normalSf(z: number): number {
  return normalTwoSidedP(z) / 2;
}
function chiSq1Sf(x: number): number {
  return chiSquareSf(x, 1);
}

/**
 * All draws in one call (tests, small jobs).
 * @param input returns T×N, factors T×K, names, options (stage, weighting, lags, scheme, blockLength, draws, seed).
 * @returns bootstrap and asymptotic p-values for J, the Wald test on each b, each drop test.
 * @throws GmmInputError on malformed input or options.
 */
export function bootstrapSdfTests(input: BootstrapInput): BootstrapResult {
  const plan = prepareBootstrap(input);
  const batch = runBootstrapDraws(plan, input.options, 0, plan.draws);
  return summariseBootstrap(plan, input, [batch]);
}

/**
 * Bootstrap p-values for the SDF model's J test, the Wald z-test on each b, the t-test on each
 * premium λ, each factor's χ² drop test and (with a drop set) the joint Wald and drop tests, by
 * resampling with recentred moments (Hall and Horowitz 1996).
 *
 * Formula (plain text). Pricing errors g_T(b) = E_T[R] − X b with X = C (centred form,
 * m = 1 − b'(f − μ)) or X = D = E_T[R f'] (uncentred form, m = 1 − b'f); original estimate b̂.
 *
 * Resampling. iid: T indices uniform on 1..T. Block: blocks of ℓ consecutive periods with uniform
 * starts on 1..T that wrap around the end of the sample (circular blocks, Politis and Romano
 * 1992), ceil(T/ℓ) blocks concatenated and the last one cut so that the draw has T periods.
 *
 * Recentring (Hall and Horowitz 1996, section 2): the bootstrap moment is
 *   g*(b) = g*_T(b) − g_T(b̄),
 * b̄ the original-sample value at which the null is imposed, so that the null holds exactly in the
 * bootstrap population. It is applied by subtracting the constant vector g_T(b̄) from the draw's
 * mean E*_T[R] used in estimation and from every row of the draw's moment series h*_t (so Ŝ*
 * is the long-run covariance of the recentred moments); returns are never shifted. This works
 * for both forms (for the uncentred form m = 1 − b'f a shift of returns would not recentre
 * R_t(1 − f_t'b)). Under iid and circular-block resampling every period has probability 1/T at
 * every position, so E*[g*_T(b)] = g_T(b) for the uncentred (linear) moments and the recentred
 * null E*[g*(b̄)] = 0 holds exactly (tests/gmm/bootstrap.test.ts enumerates all resamples).
 *   J:     b̄ = b̂; J* = the J statistic of the same estimator on the draw.
 *   Wald:  the bootstrap population's b is b̂: t*_k = (b*_k − b̂_k) / se*(b*_k) (bootstrap-t).
 *   λ:     centred form only; the population's λ is λ̂ = Σ̂_f b̂: t*_k = (λ*_k − λ̂_k) / se*(λ*_k),
 *          λ* = Σ*_f b*, se* by the premia influence function of premia.ts on the recentred h*_t.
 *          Uncentred form: not computed (null).
 *   Drop:  b̄ = b̃^(S), the original-sample restricted estimate (b_S = 0) under the ledger's common
 *          weighting W* = Ŝ_u^{-1} (second stage / last iterate; for a first-stage run Ŝ at the
 *          first-stage b̂, inverted — methods.md); in the draw D* = T (g_r*' W** g_r* − g_u*' W** g_u*)
 *          with the draw's own W** built the same way from the draw.
 *   Joint: for a drop set S, the Wald statistic (b*_S − b̂_S)' Var*(b*)_SS^{-1} (b*_S − b̂_S) and the
 *          drop test of S.
 *   p = (1 + #{stat* ≥ stat}) / (B' + 1) (|t| for the t statistics), B' the draws whose estimation
 *   succeeded (a singular draw is skipped and counted).
 *
 * Hall–Horowitz correction for the blocking (block scheme only). With blocks the bootstrap
 * statistics are studentised by the draw's Ŝ*, whose limit Ω (the HAC of the original moments,
 * lag L) is not the exact bootstrap variance of √T ḡ*(b̄),
 *   Ω̃ = T⁻¹ Var*(Σ_t h*_t(b̄)) = T⁻¹ [ (n − 1) V_ℓ + V_r ],  V_m = T⁻¹ Σ_{s=1..T} S_s,m S_s,m',
 *   S_s,m = Σ_{j=0..m−1} (h_{s+j}(b̄) − g_T(b̄))  (indices mod T),  n = ceil(T/ℓ), r = T − (n − 1)ℓ,
 * HH's Ω̃_T (for non-overlapping blocks with T = nℓ it is their T⁻¹ Σ_blocks (Σ_j h̃)(Σ_j h̃)').
 * As in HH, (i) Ŝ* of a draw keeps only the products of periods inside the same block (HH's Ω*_T;
 * done here by putting L zero rows between blocks before the Bartlett HAC and rescaling), and
 * (ii) the bootstrap statistics are corrected:
 *   t̃*_k = (S_k / S̃_k) t*_k  with S_k² = [H Ω H']_kk / T (= Var(b̂)_kk), S̃_k² = [H Ω̃ H']_kk / T
 *   (HH's corrected t; the same with ψ_λ for λ);
 *   J̃* and D̃*: the draw's recentred moment at the null, u* = ḡ*(b̄), is replaced by M u* with
 *   M = Ω^{1/2} Ω̃^{-1/2} (symmetric roots), so that its bootstrap variance is Ω, before the
 *   quadratic form is taken (HH's M_T for J; applied to the drop test by the same argument, an
 *   extension made here: HH treat t and J only). In this linear model that is J̃* = T·min_b of
 *   (X* b̂ + M u* − X* b)' W** (…) at the second stage, and α̃' Var*(α̂*)^+ α̃ with
 *   α̃ = (I − X* H*) M u* at the first stage.
 *   Joint Wald: δ* = V^{1/2} Ṽ^{-1/2} (b*_S − b̂_S) with V = Var(b̂)_SS, Ṽ = [H Ω̃ H']_SS / T.
 * Choices made here (said so, the paper left for reference): HH (1996) use non-overlapping blocks
 * with T a multiple of ℓ and the truncated uniform-weight covariance of κ-dependent moments; this
 * module keeps the product's Bartlett HAC (methods.md) and uses circular blocks, which keep the
 * two properties the correction relies on (E* of a resampled mean = the sample mean; Ω̃ exact)
 * for every T and ℓ. The iid scheme is HH's recentring without the block correction (common
 * practice). HH's formulas are quoted from memory (no copy of the paper was at hand).
 *
 * Block length: user's choice, else ℓ = ceil(T^(1/3)) (Hall, Horowitz and Jing 1995, Biometrika
 * 82(3), 561–574, give T^(1/3) as the MSE-optimal rate for distribution functions; the constant 1
 * is common practice).
 * Every draw uses its own generator seeded from (seed, draw index), so the numbers do not depend
 * on how the draws are split into chunks or threads.
 *
 * Papers: Hall, P. and Horowitz, J. L. (1996), "Bootstrap Critical Values for Tests Based on
 * Generalized-Method-of-Moments Estimators", Econometrica 64(4), 891–916. Politis, D. N. and
 * Romano, J. P. (1992), "A Circular Block-Resampling Procedure for Stationary Data", in Exploring
 * the Limits of Bootstrap (LePage and Billard, eds.), Wiley, 263–270. Künsch, H. R. (1989),
 * Annals of Statistics 17(3), 1217–1241 (block resampling). Hansen, L. P. (1982), Econometrica
 * 50(4), 1029–1054 (J). Newey, W. K. and West, K. D. (1987), International Economic Review 28(3),
 * 777–787 (drop test). Generator: mulberry32 (T. Ettinger, public-domain 32-bit generator; common
 * practice for small seeded simulations), seeded per draw through the murmur3 32-bit finaliser
 * (Appleby, public domain).
 *
 * @example
 * // The generator is reproducible: mulberry32(1)() is 0.6270739405881613 on every platform.
 * // bootstrapResample(5, 'iid', 1, mulberry32(7)) → five indices in 0..4 (the same on every run).
 */
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { chiSquareSf, normalTwoSidedP } from './distributions';
import { GmmInputError, gmmFailure, type GmmResult } from './errors';
import { defaultLag, hacCovariance, hacFromColumnRanges } from './hac';
import { dropTester } from './drop-test';
import { cholesky, choleskyInverse, choleskySolve, fromNested, matMul, matTMul, pinvSymmetricRank, quadForm, spdInverse, toNested } from './linalg';
import { covarianceFromSecondMoment, crossMoment, momentsFromColumns, momentsFromPacked, secondMomentFromColumns, type ColumnMoments, type MomentData } from './moments';
import { fitPremia } from './premia';
import { fitSdfGmm, sdfIndex, sdfLongRunCovariance, sdfMomentColumns, sdfMomentSeries, type ColumnRangeFill, type FirstStageWeighting, type GmmStage, type SdfForm, type SdfGmmFit } from './sdf-gmm';
import { validateMatrices } from './validate';
import { waldJoint } from './wald';
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

/** One draw of T period indices (0-based): iid, or circular blocks of `blockLength`. */
export function bootstrapResample(T: number, scheme: BootstrapScheme, blockLength: number, u: () => number): Int32Array {
  const idx = new Int32Array(T);
  if (scheme === 'iid' || blockLength <= 1) {
    for (let t = 0; t < T; t++) idx[t] = Math.min(T - 1, Math.floor(u() * T));
    return idx;
  }
  let t = 0;
  while (t < T) {
    const s = Math.min(T - 1, Math.floor(u() * T));
    for (let j = 0; j < blockLength && t < T; j++) idx[t++] = (s + j) % T;
  }
  return idx;
}

/**
 * Exact bootstrap covariance Ω̃ = T⁻¹ Var*(Σ_t x*_t) of a resampled series under circular blocks of
 * length ℓ (ℓ = 1: iid), for x (T×p, row-major); see the module comment. The series is demeaned
 * (the resampled, recentred moments have bootstrap mean zero).
 */
export function exactBlockCovariance(x: Float64Array, T: number, p: number, blockLength: number): Float64Array {
  const mean = new Float64Array(p);
  for (let t = 0; t < T; t++) for (let a = 0; a < p; a++) mean[a] += x[t * p + a];
  for (let a = 0; a < p; a++) mean[a] /= T;
  const l = Math.max(1, Math.min(blockLength, T));
  const n = Math.ceil(T / l);
  const r = T - (n - 1) * l;
  const sums = (m: number): Float64Array => {
    const S = new Float64Array(T * p);
    for (let s = 0; s < T; s++)
      for (let j = 0; j < m; j++) {
        const src = ((s + j) % T) * p;
        for (let a = 0; a < p; a++) S[s * p + a] += x[src + a] - mean[a];
      }
    return S;
  };
  const Sl = sums(l);
  const Vl = crossMoment(Sl, p, Sl, p, T);
  const out = new Float64Array(p * p);
  if (r === l) {
    for (let i = 0; i < out.length; i++) out[i] = (n * Vl[i]) / T;
    return out;
  }
  const Sr = sums(r);
  const Vr = crossMoment(Sr, p, Sr, p, T);
  for (let i = 0; i < out.length; i++) out[i] = ((n - 1) * Vl[i] + Vr[i]) / T;
  return out;
}

/**
 * Bartlett HAC of a resampled series keeping only products of periods inside the same block
 * (HH's Ω*_T): L zero rows are put between consecutive blocks, the HAC is taken and rescaled to
 * the divisor T. `blockLength` null: the ordinary HAC of the whole series.
 */
export function withinBlockHac(x: Float64Array, T: number, p: number, lags: number, blockLength: number | null): Float64Array {
  if (blockLength === null || lags === 0 || blockLength >= T) return hacCovariance(x, T, p, lags);
  const n = Math.ceil(T / blockLength);
  const Tp = T + (n - 1) * lags;
  const padded = new Float64Array(Tp * p);
  for (let t = 0; t < T; t++) {
    const row = t + Math.floor(t / blockLength) * lags;
    padded.set(x.subarray(t * p, t * p + p), row * p);
  }
  const S = hacCovariance(padded, Tp, p, lags);
  const scale = Tp / T;
  for (let i = 0; i < S.length; i++) S[i] *= scale;
  return S;
}

export interface BootstrapOptions {
  readonly stage: GmmStage;
  readonly weighting: FirstStageWeighting;
  readonly lags: number | 'auto';
  readonly form: SdfForm;
  readonly factorMeansKnown: boolean;
  readonly scheme: BootstrapScheme;
  /** Block length for scheme 'block'; default ceil(T^(1/3)). */
  readonly blockLength?: number;
  /** Number of draws B (default 999). */
  readonly draws?: number;
  readonly seed: number;
  /** Factor names tested jointly (joint Wald on b_S and joint drop test), as the ledger's dropSet. */
  readonly dropSet?: readonly string[];
}

export interface BootstrapInput {
  /** T×N excess returns (decimals). */
  readonly returns: readonly (readonly number[])[];
  /** T×K factors. */
  readonly factors: readonly (readonly number[])[];
  readonly factorNames: readonly string[];
  readonly options: BootstrapOptions;
}

/** A null hypothesis b_S = 0 imposed for a drop test: what the draws need of it. */
interface DropNull {
  /** 0-based factor indices of S. */
  readonly idx: readonly number[];
  /** Observed D. */
  readonly stat: number;
  /** b̃ (K, zeros at S). */
  readonly bRestricted: Float64Array;
  /** g_T(b̃) (N): the recentring vector. */
  readonly gRestricted: Float64Array;
  /** HH's M for this null (N×N), null without the block correction. */
  readonly M: Float64Array | null;
}

/** Everything a chunk of draws needs, computed once from the original sample. */
export interface BootstrapPlan {
  readonly T: number;
  readonly N: number;
  readonly K: number;
  readonly lags: number;
  readonly draws: number;
  readonly blockLength: number;
  /** Whether HH's block correction is applied (scheme 'block' with ℓ > 1). */
  readonly corrected: boolean;
  readonly m: MomentData;
  readonly fit: SdfGmmFit;
  /** Observed statistics. */
  readonly J: number;
  readonly tB: Float64Array;
  /** Observed t of λ (centred form), else null. */
  readonly tLambda: Float64Array | null;
  /** λ̂ (centred form), else null. */
  readonly lambda: Float64Array | null;
  /** Original pricing errors α̂ = g_T(b̂) (J/Wald/λ recentring). */
  readonly alpha: Float64Array;
  /** Per-factor drop nulls (an entry is null when its restricted system is singular). */
  readonly drops: readonly (DropNull | null)[];
  /** The drop set's joint null, when options.dropSet is given. */
  readonly jointDrop: DropNull | null;
  readonly jointIdx: readonly number[] | null;
  readonly jointWaldStat: number | null;
  /** HH's factors S_k / S̃_k for b and λ, M for J, the joint Wald map (identity without the correction). */
  readonly ratioB: Float64Array;
  readonly ratioLambda: Float64Array | null;
  readonly MJ: Float64Array | null;
  readonly jointWaldMap: Float64Array | null;
}

/** Raw bootstrap statistics of the draws [from, to); NaN-free (failed draws are only counted). */
export interface BootstrapBatch {
  readonly from: number;
  readonly to: number;
  readonly failed: number;
  readonly J: number[];
  /** t*_k per successful draw (K each). */
  readonly t: number[][];
  /** t* of λ_k per successful draw (K each); empty in the uncentred form. */
  readonly tLambda: number[][];
  /** D*_k per successful draw (K each; a factor without a drop test gets 0). */
  readonly drop: number[][];
  /** Joint Wald and joint drop statistics per successful draw (empty without a drop set). */
  readonly jointWald: number[];
  readonly jointDrop: number[];
}

export interface BootstrapPValue {
  readonly stat: number;
  readonly asymptoticP: number;
  readonly bootstrapP: number;
  /** Bootstrap critical value at 5% (95th percentile of the bootstrap statistic; of |t*| for t tests). */
  readonly critical95: number;
}

export interface BootstrapFactorResult {
  readonly name: string;
  readonly b: number;
  readonly wald: BootstrapPValue;
  /** Bootstrap-t test of λ_k = 0 (centred form; null in the uncentred form). */
  readonly lambda: BootstrapPValue | null;
  /** Drop test of factor k (every stage; null when the model without it is singular). */
  readonly drop: BootstrapPValue | null;
}

export interface BootstrapJoint {
  readonly factors: readonly string[];
  readonly wald: (BootstrapPValue & { readonly df: number }) | null;
  readonly drop: (BootstrapPValue & { readonly df: number }) | null;
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
  readonly form: SdfForm;
  /** 'hall-horowitz': the block correction of the module comment was applied; 'none': iid draws. */
  readonly correction: 'hall-horowitz' | 'none';
  readonly J: BootstrapPValue & { readonly df: number };
  readonly factors: readonly BootstrapFactorResult[];
  /** Joint tests of options.dropSet (null without a drop set). */
  readonly joint: BootstrapJoint | null;
  /** Deciles (10%..90%) of J*, for a plot of the bootstrap distribution. */
  readonly jDeciles: readonly number[];
  readonly notes: readonly string[];
}

// ---------------------------------------------------------------- small linear-algebra helpers

/** Symmetric A^{power} (power ±1/2) by eigendecomposition; null when A is not positive definite. */
function symmetricPower(A: Float64Array, n: number, power: 0.5 | -0.5): Float64Array | null {
  const evd = new EigenvalueDecomposition(new Matrix(toNested(A, n, n)), { assumeSymmetric: true });
  const vals = evd.realEigenvalues;
  const V = evd.eigenvectorMatrix;
  const top = Math.max(...vals);
  if (!(top > 0) || vals.some((v) => !(v > top * 1e-12))) return null;
  const out = new Float64Array(n * n);
  for (let c = 0; c < n; c++) {
    const w = Math.pow(vals[c], power);
    for (let i = 0; i < n; i++) {
      const vi = V.get(i, c) * w;
      for (let j = 0; j < n; j++) out[i * n + j] += vi * V.get(j, c);
    }
  }
  return out;
}

/** HH's M = Ω^{1/2} Ω̃^{-1/2}; null when either is singular. */
function hhMap(omega: Float64Array, omegaTilde: Float64Array, n: number): Float64Array | null {
  const a = symmetricPower(omega, n, 0.5);
  const b = symmetricPower(omegaTilde, n, -0.5);
  return a && b ? matMul(a, n, n, b, n) : null;
}

/** (H Ω H')_SS / T for rows S of H (K×N). */
function sandwich(H: Float64Array, N: number, omega: Float64Array, T: number, idx: readonly number[]): Float64Array {
  const s = idx.length;
  const out = new Float64Array(s * s);
  for (let a = 0; a < s; a++)
    for (let c = a; c < s; c++) {
      const ra = idx[a] * N;
      const rc = idx[c] * N;
      let v = 0;
      for (let i = 0; i < N; i++) {
        const hi = H[ra + i];
        if (hi === 0) continue;
        let w = 0;
        for (let j = 0; j < N; j++) w += omega[i * N + j] * H[rc + j];
        v += hi * w;
      }
      out[a * s + c] = v / T;
      out[c * s + a] = v / T;
    }
  return out;
}

/** Restricted estimate b̃ (b_S = 0) under W and its pricing errors g_T(b̃); null when singular. */
function restricted(X: Float64Array, W: Float64Array, meanR: Float64Array, N: number, K: number, drop: readonly number[]): { b: Float64Array; g: Float64Array } | null {
  const keep = Array.from({ length: K }, (_, j) => j).filter((j) => !drop.includes(j));
  const b = new Float64Array(K);
  const g = Float64Array.from(meanR);
  if (keep.length > 0) {
    const q = keep.length;
    const Xk = new Float64Array(N * q);
    for (let i = 0; i < N; i++) for (let a = 0; a < q; a++) Xk[i * q + a] = X[i * K + keep[a]];
    const WX = matMul(W, N, N, Xk, q);
    const A = matTMul(Xk, N, q, WX, q);
    const L = cholesky(A, q);
    if (!L) return null;
    const rhs = new Float64Array(q);
    for (let a = 0; a < q; a++) for (let i = 0; i < N; i++) rhs[a] += WX[i * q + a] * meanR[i];
    const bk = choleskySolve(L, q, rhs, 1);
    keep.forEach((k, a) => (b[k] = bk[a]));
  }
  for (let i = 0; i < N; i++) for (let k = 0; k < K; k++) g[i] -= X[i * K + k] * b[k];
  return { b, g };
}

/** min over b with b_S = 0 of (m − X b)' W (m − X b), the GMM objective without the columns `drop`; null if singular. */
function objective(X: Float64Array, W: Float64Array, m: Float64Array, N: number, K: number, drop: readonly number[]): number | null {
  const r = restricted(X, W, m, N, K, drop);
  return r ? quadForm(W, N, r.g) : null;
}

/**
 * withinBlockHac of the recentred moment series h_t(b) − c, built column by column from the
 * column-major returns (no T×N row-major series, no transposed copy): the zero rows between blocks
 * are left in place in each padded column. The same numbers, to the last bit, as withinBlockHac of
 * the row-major series (tests/gmm/bootstrap-columns.test.ts).
 */
export function recentredLongRun(m: ColumnMoments, b: ArrayLike<number>, form: SdfForm, fmk: boolean, c: Float64Array | null, lags: number, blockLength: number | null): Float64Array {
  const { T, N } = m;
  const column = sdfMomentColumns(m, sdfIndex(m, b, form), form, fmk, c);
  if (blockLength === null || lags === 0 || blockLength >= T) return hacFromColumnRanges(T, N, lags, column);
  const n = Math.ceil(T / blockLength);
  const Tp = T + (n - 1) * lags;
  // padded row u: block j = floor(u / (ℓ + L)); its first ℓ rows are periods jℓ .., the next L are zero
  const period = blockLength + lags;
  const dataOf = (u: number) => {
    const j = Math.floor(u / period);
    return { t: j * blockLength + Math.min(u - j * period, blockLength), gap: u - j * period >= blockLength };
  };
  let h = new Float64Array(0);
  const S = hacFromColumnRanges(Tp, N, lags, (i, u0, u1, buf) => {
    // periods [ta, tb) have their rows in [u0, u1)
    const ta = dataOf(u0).t;
    const last = dataOf(u1 - 1);
    const tb = last.gap ? last.t : last.t + 1;
    if (h.length < tb - ta) h = new Float64Array(tb - ta);
    if (tb > ta) column(i, ta, tb, h);
    for (let u = u0; u < u1; u++) {
      const j = Math.floor(u / period);
      const o = u - j * period;
      buf[u - u0] = o < blockLength ? h[j * blockLength + o - ta] : 0;
    }
  });
  const scale = Tp / T;
  for (let i = 0; i < S.length; i++) S[i] *= scale;
  return S;
}

/**
 * Influence series of λ̂ = Σ_f b̂ (centred form, premia.ts): ψ_λ,t = Σ_f H h_t + f̃_t (f̃_t'b) − λ,
 * with h_t the (recentred) moment series, read a column at a time through `column(i, 0, T, buf)`.
 * The sum over assets runs in asset order for every t, as a row-by-row loop would. T×K row-major.
 */
export function lambdaInfluence(m: ColumnMoments, b: Float64Array, H: Float64Array, column: ColumnRangeFill): { lambda: Float64Array; psi: Float64Array } {
  const { T, N, K, Fc, sigmaF } = m;
  const lambda = new Float64Array(K);
  for (let a = 0; a < K; a++) for (let c = 0; c < K; c++) lambda[a] += sigmaF[a * K + c] * b[c];
  const SH = matMul(sigmaF, K, K, H, N); // K×N
  // Σ_i SH[a, i] h_i,t into a K×T array, four asset columns per pass over it; the terms are still
  // added one asset after another, so the sums are those of a plain loop over i.
  const acc = new Float64Array(K * T);
  const hs = [new Float64Array(T), new Float64Array(T), new Float64Array(T), new Float64Array(T)];
  for (let i0 = 0; i0 < N; i0 += 4) {
    const n = Math.min(4, N - i0);
    for (let j = 0; j < n; j++) column(i0 + j, 0, T, hs[j]);
    const [h0, h1, h2, h3] = hs;
    for (let a = 0; a < K; a++) {
      const off = a * T;
      const w0 = SH[a * N + i0];
      if (n === 4) {
        const w1 = SH[a * N + i0 + 1], w2 = SH[a * N + i0 + 2], w3 = SH[a * N + i0 + 3];
        for (let t = 0; t < T; t++) {
          let v = acc[off + t];
          v += w0 * h0[t];
          v += w1 * h1[t];
          v += w2 * h2[t];
          v += w3 * h3[t];
          acc[off + t] = v;
        }
      } else
        for (let j = 0; j < n; j++) {
          const w = SH[a * N + i0 + j];
          const h = hs[j];
          for (let t = 0; t < T; t++) acc[off + t] += w * h[t];
        }
    }
  }
  const psi = new Float64Array(T * K);
  for (let t = 0; t < T; t++) {
    let fb = 0;
    for (let k = 0; k < K; k++) fb += Fc[t * K + k] * b[k];
    for (let a = 0; a < K; a++) psi[t * K + a] = acc[a * T + t] + Fc[t * K + a] * fb - lambda[a];
  }
  return { lambda, psi };
}

// ---------------------------------------------------------------- the estimator on a draw

interface RecentredFit {
  readonly b: Float64Array;
  readonly H: Float64Array;
  readonly X: Float64Array;
  /** Weighting of the reported b. */
  readonly W: Float64Array;
  /** The drop test's common weighting (second-stage W; first stage: Ŝ at b̂ inverted). */
  readonly Wdrop: Float64Array;
  readonly mean: Float64Array;
  readonly covB: Float64Array;
  /** First stage only: Var(α̂)^+ (rank N − K). */
  readonly covAlphaPinv: Float64Array | null;
  readonly J: number;
}

interface FitConfig {
  readonly stage: GmmStage;
  readonly weighting: FirstStageWeighting;
  readonly lags: number;
  readonly form: SdfForm;
  readonly factorMeansKnown: boolean;
  /** Block length for the within-block Ŝ*, null: ordinary HAC. */
  readonly block: number | null;
}

function solveWeighted(X: Float64Array, W: Float64Array, mean: Float64Array, N: number, K: number): { b: Float64Array; H: Float64Array } | null {
  const WX = matMul(W, N, N, X, K);
  const A = matTMul(X, N, K, WX, K);
  const L = cholesky(A, K);
  if (!L) return null;
  const WXt = new Float64Array(K * N);
  for (let i = 0; i < N; i++) for (let k = 0; k < K; k++) WXt[k * N + i] = WX[i * K + k];
  const H = choleskySolve(L, K, WXt, N);
  const b = new Float64Array(K);
  for (let k = 0; k < K; k++) for (let i = 0; i < N; i++) b[k] += H[k * N + i] * mean[i];
  return { b, H };
}

/**
 * SDF GMM (sdf-gmm.ts's estimator: same stages, weightings, J) on moments recentred by the constant
 * vector c: g(b) = E_T[R] − c − X b and h_t(b) − c. With c = 0 and block = null it reproduces
 * fitSdfGmm (tested). Returns null when a system is singular.
 */
export function fitRecentred(ms: ColumnMoments, c: Float64Array | null, cfg: FitConfig, secondMoment?: Float64Array): GmmResult<RecentredFit> {
  const { T, N, K } = ms;
  const fmk = cfg.form === 'centred' && cfg.factorMeansKnown;
  const X = cfg.form === 'centred' ? ms.covRF : ms.crossRF;
  const mean = Float64Array.from(ms.meanR);
  if (c) for (let i = 0; i < N; i++) mean[i] -= c[i];
  const longRun = (b: ArrayLike<number>) => recentredLongRun(ms, b, cfg.form, fmk, c, cfg.lags, cfg.block);
  let W: Float64Array;
  if (cfg.weighting === 'identity') {
    W = new Float64Array(N * N);
    for (let i = 0; i < N; i++) W[i * N + i] = 1;
  } else {
    const E = secondMoment ?? secondMomentFromColumns(ms.Rcols, T, N);
    const L = cholesky(cfg.weighting === 'covariance' ? covarianceFromSecondMoment(E, ms.meanR) : E, N);
    if (!L) return gmmFailure('singular', 'The first-stage weighting matrix is singular on this draw.', 'W');
    W = choleskyInverse(L, N);
  }
  let sol = solveWeighted(X, W, mean, N, K);
  if (!sol) return gmmFailure('singular', "X'WX is singular on this draw.", "X'WX");
  if (cfg.stage !== 'first') {
    const cap = cfg.stage === 'iterated' ? 100 : 1;
    for (let it = 1; it <= cap; it++) {
      const S = longRun(sol.b);
      const L = cholesky(S, N);
      if (!L) return gmmFailure('singular', 'The long-run covariance Ŝ is singular on this draw.', 'S');
      const Wn = choleskyInverse(L, N);
      const next = solveWeighted(X, Wn, mean, N, K);
      if (!next) return gmmFailure('singular', "X'ŴX is singular on this draw.", "X'WX");
      let move = 0;
      let size = 0;
      for (let k = 0; k < K; k++) {
        move = Math.max(move, Math.abs(next.b[k] - sol.b[k]));
        size = Math.max(size, Math.abs(next.b[k]));
      }
      sol = next;
      W = Wn;
      if (move <= 1e-10 * Math.max(1e-300, size)) break;
    }
  }
  const { b, H } = sol;
  const alpha = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    let s = mean[i];
    for (let k = 0; k < K; k++) s -= X[i * K + k] * b[k];
    alpha[i] = s;
  }
  const Sb = longRun(b);
  const HS = matMul(H, K, N, Sb, N);
  const covB = new Float64Array(K * K);
  for (let a = 0; a < K; a++) for (let d = 0; d < K; d++) for (let i = 0; i < N; i++) covB[a * K + d] += (HS[a * N + i] * H[d * N + i]) / T;
  let J: number;
  let covAlphaPinv: Float64Array | null = null;
  let Wdrop = W;
  const df = N - K;
  if (cfg.stage === 'first') {
    // Var(α̂) = (I − XH) Ŝ_b (I − XH)' / T
    const M = new Float64Array(N * N);
    for (let i = 0; i < N; i++) M[i * N + i] = 1;
    const XH = matMul(X, N, K, H, N);
    for (let i = 0; i < N * N; i++) M[i] -= XH[i];
    const MS = matMul(M, N, N, Sb, N);
    const V = new Float64Array(N * N);
    for (let i = 0; i < N; i++) for (let j = 0; j < N; j++) {
      let v = 0;
      for (let q = 0; q < N; q++) v += MS[i * N + q] * M[j * N + q];
      V[i * N + j] = v / T;
    }
    covAlphaPinv = pinvSymmetricRank(V, N, df);
    if (!covAlphaPinv && df > 0) return gmmFailure('singular', 'Var(α̂) does not have rank N − K on this draw.', 'Var(alpha)');
    J = df > 0 && covAlphaPinv ? Math.max(0, quadForm(covAlphaPinv, N, alpha)) : 0;
    // first stage: the reported b is the first-stage b̂, so Ŝ_b is the drop test's Ŝ
    const inv = spdInverse(Sb, N);
    if (!inv) return gmmFailure('singular', 'The long-run covariance Ŝ at b̂ is singular on this draw.', 'S');
    Wdrop = inv;
  } else {
    J = df > 0 ? Math.max(0, T * quadForm(W, N, alpha)) : 0;
  }
  return { ok: true, b, H, X, W, Wdrop, mean, covB, covAlphaPinv, J };
}

// ---------------------------------------------------------------- plan

function seOf(cov: ArrayLike<number>, K: number, k: number): number {
  return Math.sqrt(Math.max(0, cov[k * K + k]));
}

/** X b for X (N×K). */
function times(X: Float64Array, N: number, K: number, b: ArrayLike<number>): Float64Array {
  const out = new Float64Array(N);
  for (let i = 0; i < N; i++) for (let k = 0; k < K; k++) out[i] += X[i * K + k] * b[k];
  return out;
}

/**
 * Validate the input and compute the original estimate, the observed statistics, the recentring
 * vectors and (block scheme) HH's correction factors.
 * @returns `{ ok: true, plan }`, or a typed failure when the original fit or the drop tests' common
 *   weighting is singular or does not converge (the same data cannot be bootstrapped on any try).
 * @throws GmmInputError on malformed input or an option out of range.
 */
export function prepareBootstrap(input: BootstrapInput): GmmResult<{ plan: BootstrapPlan }> {
  const { T, N, K } = validateMatrices(input.returns, input.factors, { factorNames: input.factorNames });
  const o = input.options;
  if (o.form !== 'centred' && o.form !== 'uncentred') throw new GmmInputError('invalid-option', `form must be centred or uncentred; got '${String(o.form)}'.`);
  const draws = o.draws ?? 999;
  if (!Number.isInteger(draws) || draws < 19 || draws > 100_000)
    throw new GmmInputError('invalid-option', `draws must be an integer from 19 to 100000; got ${String(o.draws)}.`);
  if (!Number.isInteger(o.seed) || o.seed < 0 || o.seed > 0xffffffff)
    throw new GmmInputError('invalid-option', `seed must be an integer from 0 to 4294967295; got ${String(o.seed)}.`);
  const lags = o.lags === 'auto' ? defaultLag(T) : o.lags;
  if (!Number.isInteger(lags) || lags < 0 || lags >= T)
    throw new GmmInputError('invalid-lags', `lags must be 'auto' or an integer from 0 to ${T - 1}; got ${String(o.lags)}.`);
  if (o.scheme !== 'iid' && o.scheme !== 'block')
    throw new GmmInputError('invalid-option', `scheme must be iid or block; got '${String(o.scheme)}'.`);
  const blockLength = o.scheme === 'block' ? (o.blockLength ?? defaultBlockLength(T)) : 1;
  if (!Number.isInteger(blockLength) || blockLength < 1 || blockLength > Math.floor(T / 2))
    throw new GmmInputError('invalid-option', `blockLength must be an integer from 1 to ${Math.floor(T / 2)} (T/2); got ${String(o.blockLength)}.`);
  let jointIdx: number[] | null = null;
  if (o.dropSet !== undefined) {
    if (!Array.isArray(o.dropSet) || o.dropSet.length === 0) throw new GmmInputError('invalid-option', 'dropSet, when given, must name at least one factor.');
    for (const n of o.dropSet)
      if (!input.factorNames.includes(n)) throw new GmmInputError('unknown-factor', `dropSet names '${n}', which is not a factor of the model.`, { series: n });
    if (new Set(o.dropSet).size !== o.dropSet.length) throw new GmmInputError('invalid-option', 'dropSet names a factor twice.');
    jointIdx = o.dropSet.map((n) => input.factorNames.indexOf(n));
  }
  const m = momentsFromPacked(fromNested(input.returns, N), fromNested(input.factors, K), T, N, K);
  const fmk = o.form === 'centred' && o.factorMeansKnown;
  const fit = fitSdfGmm(m, { stage: o.stage, weighting: o.weighting, lags, form: o.form, factorMeansKnown: fmk });
  if (!fit.ok) return gmmFailure(fit.code, `The model cannot be estimated on these data: ${fit.message}`, fit.matrix);
  const tB = Float64Array.from({ length: K }, (_, k) => {
    const se = seOf(fit.covB, K, k);
    return se > 0 ? fit.b[k] / se : 0;
  });
  let lambda: Float64Array | null = null;
  let tLambda: Float64Array | null = null;
  let covLambda: Float64Array | null = null;
  if (o.form === 'centred') {
    const prem = fitPremia(m, fit);
    if (prem.ok) {
      lambda = prem.lambda;
      covLambda = prem.covLambda;
      tLambda = Float64Array.from({ length: K }, (_, k) => {
        const se = seOf(prem.covLambda, K, k);
        return se > 0 ? prem.lambda[k] / se : 0;
      });
    }
  }
  // the drop test's common weighting W* (methods.md): second stage / last iterate, or Ŝ at the first-stage b̂
  let Wstar = fit.W;
  if (o.stage === 'first') {
    const inv = spdInverse(sdfLongRunCovariance(m, fit.b, o.form, fmk, lags), N);
    if (!inv) return gmmFailure('singular', 'The long-run covariance of the moments is singular; the drop tests cannot be bootstrapped.', 'S');
    Wstar = inv;
  }
  const corrected = o.scheme === 'block' && blockLength > 1;
  const tester = dropTester({ T, N, K, X: fit.X, W: Wstar, meanR: m.meanR });
  const makeNull = (idx: readonly number[]): DropNull | null => {
    const r = restricted(fit.X, Wstar, m.meanR, N, K, idx);
    const d = tester(idx);
    if (!r || !d.ok) return null;
    let M: Float64Array | null = null;
    if (corrected) {
      const omega = sdfLongRunCovariance(m, r.b, o.form, fmk, lags);
      const omegaTilde = exactBlockCovariance(sdfMomentSeries(m, r.b, o.form, fmk), T, N, blockLength);
      M = hhMap(omega, omegaTilde, N);
    }
    return { idx, stat: d.stat, bRestricted: r.b, gRestricted: r.g, M };
  };
  const drops = Array.from({ length: K }, (_, k) => makeNull([k]));
  const jointDrop = jointIdx ? makeNull(jointIdx) : null;
  const jw = jointIdx ? waldJoint(fit.b, fit.covB, K, jointIdx) : null;
  const jointWaldStat = jw?.ok ? jw.stat : null;

  const ratioB = new Float64Array(K).fill(1);
  let ratioLambda: Float64Array | null = lambda ? new Float64Array(K).fill(1) : null;
  let MJ: Float64Array | null = null;
  let jointWaldMap: Float64Array | null = null;
  if (corrected) {
    const h = sdfMomentSeries(m, fit.b, o.form, fmk);
    const omegaTilde = exactBlockCovariance(h, T, N, blockLength);
    MJ = hhMap(fit.Sb, omegaTilde, N);
    const all = Array.from({ length: K }, (_, k) => k);
    const Vt = sandwich(fit.H, N, omegaTilde, T, all);
    for (let k = 0; k < K; k++) {
      const s = seOf(fit.covB, K, k);
      const st = Math.sqrt(Math.max(0, Vt[k * K + k]));
      ratioB[k] = s > 0 && st > 0 ? s / st : 1;
    }
    if (lambda && covLambda && ratioLambda) {
      const { psi } = lambdaInfluence(m, fit.b, fit.H, (i, t0, t1, buf) => {
        for (let t = t0; t < t1; t++) buf[t - t0] = h[t * N + i];
      });
      const Lt = exactBlockCovariance(psi, T, K, blockLength);
      for (let k = 0; k < K; k++) {
        const s = seOf(covLambda, K, k);
        const st = Math.sqrt(Math.max(0, Lt[k * K + k] / T));
        ratioLambda[k] = s > 0 && st > 0 ? s / st : 1;
      }
    }
    if (jointIdx) {
      const q = jointIdx.length;
      const V = new Float64Array(q * q);
      for (let a = 0; a < q; a++) for (let c = 0; c < q; c++) V[a * q + c] = fit.covB[jointIdx[a] * K + jointIdx[c]];
      const Vhalf = symmetricPower(V, q, 0.5);
      const VtInvHalf = symmetricPower(sandwich(fit.H, N, omegaTilde, T, jointIdx), q, -0.5);
      jointWaldMap = Vhalf && VtInvHalf ? matMul(Vhalf, q, q, VtInvHalf, q) : null;
    }
  } else if (!lambda) ratioLambda = null;
  const plan: BootstrapPlan = {
    T, N, K, lags, draws, blockLength, corrected, m, fit,
    J: fit.J.stat, tB, tLambda, lambda, alpha: fit.alpha,
    drops, jointDrop, jointIdx, jointWaldStat,
    ratioB, ratioLambda, MJ, jointWaldMap,
  };
  return { ok: true, plan };
}

// ---------------------------------------------------------------- draws

/** The mean X* b̄ + M (mean* − X* b̄) that carries HH's M (M null: the mean itself). */
function mapped(X: Float64Array, N: number, K: number, mean: Float64Array, bNull: ArrayLike<number>, M: Float64Array | null): Float64Array {
  if (!M) return mean;
  const xb = times(X, N, K, bNull);
  const u = new Float64Array(N);
  for (let i = 0; i < N; i++) u[i] = mean[i] - xb[i];
  const out = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    let v = xb[i];
    for (let j = 0; j < N; j++) v += M[i * N + j] * u[j];
    out[i] = v;
  }
  return out;
}

/** T (q_r − q_u) with the common weighting W on the mean m; null when singular. */
function dropStat(X: Float64Array, W: Float64Array, m: Float64Array, T: number, N: number, K: number, idx: readonly number[]): number | null {
  const qu = objective(X, W, m, N, K, []);
  const qr = objective(X, W, m, N, K, idx);
  if (qu === null || qr === null) return null;
  return Math.max(0, T * (qr - qu));
}

/**
 * Run the draws [from, to) of a plan. Deterministic in (seed, draw index).
 * @param onDraw optional callback after each draw (progress).
 */
export function runBootstrapDraws(plan: BootstrapPlan, options: BootstrapOptions, from: number, to: number, onDraw?: (done: number) => void): BootstrapBatch {
  const { T, N, K, m, lags } = plan;
  const R = m.R;
  const F = m.F;
  const out: { J: number[]; t: number[][]; tLambda: number[][]; drop: number[][]; jointWald: number[]; jointDrop: number[] } = {
    J: [], t: [], tLambda: [], drop: [], jointWald: [], jointDrop: [],
  };
  let failed = 0;
  const cfg: FitConfig = {
    stage: options.stage,
    weighting: options.weighting,
    lags,
    form: options.form,
    factorMeansKnown: options.factorMeansKnown,
    block: plan.corrected ? plan.blockLength : null,
  };
  // One buffer for every draw's returns and factors (a fresh 8·T·N-byte array per draw costs more in
  // page faults and collection than the gather itself); nothing keeps a draw's moments past its draw.
  const Rs = new Float64Array(T * N);
  const Fs = new Float64Array(T * K);
  for (let d = from; d < to; d++) {
    const u = mulberry32(streamSeed(options.seed, d));
    const idx = bootstrapResample(T, options.scheme, plan.blockLength, u);
    // The draw's returns go straight into column-major order, the layout every kernel below reads:
    // each draw period's sample row is read whole and scattered into the N columns (no row-major
    // copy of the draw, no separate transposition; faster than gathering column by column).
    for (let r = 0; r < T; r++) {
      const src = idx[r] * N;
      for (let i = 0; i < N; i++) Rs[i * T + r] = R[src + i];
    }
    for (let r = 0; r < T; r++) Fs.set(F.subarray(idx[r] * K, idx[r] * K + K), r * K);
    const ms = momentsFromColumns(Rs, Fs, T, N, K);
    const second = options.weighting === 'identity' ? undefined : secondMomentFromColumns(Rs, T, N);
    const f = fitRecentred(ms, plan.alpha, cfg, second);
    const row = f.ok ? drawStatistics(plan, f, ms, cfg) : null;
    if (!row) {
      failed += 1;
      onDraw?.(d - from + 1);
      continue;
    }
    out.J.push(row.J);
    out.t.push(row.t);
    if (row.tLambda) out.tLambda.push(row.tLambda);
    out.drop.push(row.drop);
    if (row.jointWald !== null) out.jointWald.push(row.jointWald);
    if (row.jointDrop !== null) out.jointDrop.push(row.jointDrop);
    onDraw?.(d - from + 1);
  }
  return { from, to, failed, ...out };
}

function drawStatistics(
  plan: BootstrapPlan,
  f: RecentredFit,
  ms: ColumnMoments,
  cfg: FitConfig,
): { J: number; t: number[]; tLambda: number[] | null; drop: number[]; jointWald: number | null; jointDrop: number | null } | null {
  const { T, N, K, fit } = plan;
  // J, with HH's M on the moment at b̂ when corrected
  let J = f.J;
  if (plan.MJ) {
    const mt = mapped(f.X, N, K, f.mean, fit.b, plan.MJ);
    if (cfg.stage === 'first') {
      const alpha = new Float64Array(N);
      const bt = new Float64Array(K);
      for (let k = 0; k < K; k++) for (let i = 0; i < N; i++) bt[k] += f.H[k * N + i] * mt[i];
      const xb = times(f.X, N, K, bt);
      for (let i = 0; i < N; i++) alpha[i] = mt[i] - xb[i];
      J = f.covAlphaPinv && N > K ? Math.max(0, quadForm(f.covAlphaPinv, N, alpha)) : 0;
    } else {
      const q = objective(f.X, f.W, mt, N, K, []);
      if (q === null) return null;
      J = N > K ? Math.max(0, T * q) : 0;
    }
  }
  const t: number[] = [];
  for (let k = 0; k < K; k++) {
    const se = seOf(f.covB, K, k);
    t.push(se > 0 ? (plan.ratioB[k] * (f.b[k] - fit.b[k])) / se : 0);
  }
  let tLambda: number[] | null = null;
  if (plan.lambda && plan.ratioLambda) {
    const fmk = cfg.form === 'centred' && cfg.factorMeansKnown;
    const { lambda, psi } = lambdaInfluence(ms, f.b, f.H, sdfMomentColumns(ms, sdfIndex(ms, f.b, cfg.form), cfg.form, fmk, plan.alpha));
    const V = withinBlockHac(psi, T, K, cfg.lags, cfg.block);
    tLambda = [];
    for (let k = 0; k < K; k++) {
      const se = Math.sqrt(Math.max(0, V[k * K + k] / T));
      tLambda.push(se > 0 ? (plan.ratioLambda[k] * (lambda[k] - plan.lambda[k])) / se : 0);
    }
  }
  const dropOf = (nul: DropNull): number | null => {
    const mean = new Float64Array(N);
    for (let i = 0; i < N; i++) mean[i] = ms.meanR[i] - nul.gRestricted[i];
    return dropStat(f.X, f.Wdrop, mapped(f.X, N, K, mean, nul.bRestricted, nul.M), T, N, K, nul.idx);
  };
  const drop: number[] = [];
  for (const nul of plan.drops) {
    if (!nul) {
      drop.push(0);
      continue;
    }
    const s = dropOf(nul);
    if (s === null) return null;
    drop.push(s);
  }
  let jointDrop: number | null = null;
  if (plan.jointDrop) {
    jointDrop = dropOf(plan.jointDrop);
    if (jointDrop === null) return null;
  }
  let jointWald: number | null = null;
  if (plan.jointIdx && plan.jointWaldStat !== null) {
    const S = plan.jointIdx;
    const q = S.length;
    let delta = S.map((k) => f.b[k] - fit.b[k]);
    if (plan.jointWaldMap) {
      const Mw = plan.jointWaldMap;
      delta = delta.map((_, a) => delta.reduce((s, v, c) => s + Mw[a * q + c] * v, 0));
    }
    const V = new Float64Array(q * q);
    for (let a = 0; a < q; a++) for (let c = 0; c < q; c++) V[a * q + c] = f.covB[S[a] * K + S[c]];
    const Vi = spdInverse(V, q);
    if (!Vi) return null;
    jointWald = Math.max(0, quadForm(Vi, q, delta));
  }
  return { J, t, tLambda, drop, jointWald, jointDrop };
}

// ---------------------------------------------------------------- summary

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

/** Bootstrap p and critical value of an upper-tail statistic. */
function upperTail(stat: number, asymptoticP: number, draws: readonly number[], valid: number): BootstrapPValue {
  const s = [...draws].sort((a, b) => a - b);
  return { stat, asymptoticP, bootstrapP: bootP(s.filter((v) => v >= stat).length, valid), critical95: quantile(s, 0.95) };
}

/** Two-sided bootstrap-t: |t*| against |t|. */
function twoSided(stat: number, draws: readonly number[], valid: number, degenerate: boolean): BootstrapPValue {
  const abs = draws.map(Math.abs).sort((a, b) => a - b);
  return {
    stat,
    asymptoticP: degenerate ? 1 : normalTwoSidedP(Math.abs(stat)),
    bootstrapP: bootP(abs.filter((v) => v >= Math.abs(stat)).length, valid),
    critical95: quantile(abs, 0.95),
  };
}

/** Combine batches (any order, any split) into the bootstrap result. */
export function summariseBootstrap(plan: BootstrapPlan, input: BootstrapInput, batches: readonly BootstrapBatch[]): BootstrapResult {
  const sorted = [...batches].sort((a, b) => a.from - b.from);
  const J = sorted.flatMap((b) => b.J);
  const t = sorted.flatMap((b) => b.t);
  const tl = sorted.flatMap((b) => b.tLambda ?? []);
  const drop = sorted.flatMap((b) => b.drop);
  const jw = sorted.flatMap((b) => b.jointWald ?? []);
  const jd = sorted.flatMap((b) => b.jointDrop ?? []);
  const failed = sorted.reduce((s, b) => s + b.failed, 0);
  const valid = J.length;
  const o = input.options;
  const K = plan.K;
  const notes: string[] = [];
  if (o.stage === 'iterated') notes.push('Each draw repeats the iterated estimator (up to 100 weighting updates).');
  if (o.stage === 'first') notes.push('Drop tests use the common weighting Ŝ⁻¹ at the first-stage estimate, in the sample and in every draw.');
  if (o.scheme === 'block')
    notes.push(
      plan.corrected
        ? `Circular blocks of ${plan.blockLength} periods; Hall–Horowitz correction for the blocking (within-block Ŝ*, statistics rescaled to the exact bootstrap variance).`
        : `Blocks of ${plan.blockLength} period(s): the same as iid draws, no block correction.`,
    );
  if (plan.corrected && plan.lags >= plan.blockLength) notes.push(`The HAC lag ${plan.lags} is not below the block length ${plan.blockLength}: within a draw only lags below ${plan.blockLength} are estimated.`);
  if (plan.corrected && !plan.MJ) notes.push('The exact bootstrap covariance is singular: J and drop tests are not corrected for the blocking.');
  if (o.form === 'uncentred') notes.push('Uncentred form: no bootstrap test of λ (its premia are a ratio; only the centred form has one).');
  if (failed > 0) notes.push(`${failed} draw(s) gave a singular system and were skipped.`);
  const names = input.factorNames;
  plan.drops.forEach((d, k) => {
    if (!d) notes.push(`The model without '${names[k]}' is singular: its drop test is not bootstrapped.`);
  });
  const factors: BootstrapFactorResult[] = names.map((name, k) => {
    const seB = seOf(plan.fit.covB, K, k);
    const wald = twoSided(plan.tB[k], t.map((r) => r[k]), valid, !(seB > 0));
    const lambda = plan.tLambda && tl.length === valid ? twoSided(plan.tLambda[k], tl.map((r) => r[k]), valid, plan.tLambda[k] === 0) : null;
    const nul = plan.drops[k];
    const dropP = nul ? upperTail(nul.stat, chiSquareSf(nul.stat, 1), drop.map((r) => r[k]), valid) : null;
    return { name, b: plan.fit.b[k], wald, lambda, drop: dropP };
  });
  let joint: BootstrapJoint | null = null;
  if (plan.jointIdx && o.dropSet) {
    const df = plan.jointIdx.length;
    joint = {
      factors: [...o.dropSet],
      wald: plan.jointWaldStat !== null && jw.length === valid ? { ...upperTail(plan.jointWaldStat, chiSquareSf(plan.jointWaldStat, df), jw, valid), df } : null,
      drop: plan.jointDrop && jd.length === valid ? { ...upperTail(plan.jointDrop.stat, chiSquareSf(plan.jointDrop.stat, df), jd, valid), df } : null,
    };
  }
  const Jsorted = [...J].sort((a, b) => a - b);
  return {
    T: plan.T,
    N: plan.N,
    K,
    scheme: o.scheme,
    blockLength: plan.blockLength,
    draws: plan.draws,
    validDraws: valid,
    failedDraws: failed,
    seed: o.seed,
    lags: plan.lags,
    stage: o.stage,
    form: o.form,
    correction: plan.corrected ? 'hall-horowitz' : 'none',
    J: { ...upperTail(plan.J, plan.fit.J.p, J, valid), df: plan.fit.J.df },
    factors,
    joint,
    jDeciles: [0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9].map((q) => quantile(Jsorted, q)),
    notes,
  };
}

/**
 * All draws in one call (tests, small jobs, the CLI).
 * @param input returns T×N, factors T×K, names, options (stage, weighting, lags, form, scheme,
 *   blockLength, draws, seed, dropSet).
 * @returns bootstrap and asymptotic p-values for J, the Wald test on each b, the t-test on each λ
 *   (centred form), each drop test and the drop set's joint tests.
 *   As `{ ok: true, bootstrap }`, or the typed failure of {@link prepareBootstrap}.
 * @throws GmmInputError on malformed input or options.
 */
export function bootstrapSdfTests(input: BootstrapInput): GmmResult<{ bootstrap: BootstrapResult }> {
  const prepared = prepareBootstrap(input);
  if (!prepared.ok) return prepared;
  const { plan } = prepared;
  const batch = runBootstrapDraws(plan, input.options, 0, plan.draws);
  return { ok: true, bootstrap: summariseBootstrap(plan, input, [batch]) };
}

/**
 * Squared Sharpe ratio of a model's factors, and the comparison of two models by it.
 *
 * With traded factors, the model that prices the other model's factors and the test assets best
 * is the one whose factors reach the higher maximum squared Sharpe ratio (Barillas and Shanken
 * 2017), so two models can be compared without choosing test assets.
 *
 * Formula (plain text). For the factors f of one model (all traded), μ = E_T[f], Σ_f = Cov_T(f)
 * (divisor T):
 *   θ̂ = μ'Σ_f^{-1}μ,   u_t = μ'Σ_f^{-1}(f_t − μ),   ψ_t = 2u_t − u_t² + θ̂   (influence of θ̂),
 *   se(θ̂) = sqrt(LRV(ψ)/T)   (Bartlett HAC, the run's lag, not demeaned; Σ_t ψ_t = 0 anyway).
 * Two models A and B on the same periods (they may share factors):
 *   z = (θ̂_A − θ̂_B) / sqrt(LRV(ψ_A − ψ_B)/T),   two-sided standard normal p.
 * The normal test holds for non-nested models. When one model's factors contain the other's
 * (B ⊂ A), θ_A = θ_B is exactly the hypothesis that A's extra factors are spanned by B's, and ψ_A −
 * ψ_B degenerates under it; `compareModels` then returns the joint spanning test of A's extra
 * factors on B's factors instead (spanning.ts, Huberman and Kandel 1987), with the reason.
 *
 * Papers: Barillas, F. and Shanken, J. (2017), "Which Alpha?", Review of Financial Studies 30(4),
 * 1316–1338. Barillas, F., Kan, R., Robotti, C. and Shanken, J. (2020), "Model Comparison with
 * Sharpe Ratios", Journal of Financial and Quantitative Analysis 55(6), 1840–1874. Newey and
 * West (1987, Econometrica) for the HAC estimate.
 *
 * @example
 * const r = compareModels({ factors, factorNames: ['MKT', 'CARRY', 'GROWTH'], traded: [true, true, true],
 *   modelA: ['MKT', 'CARRY'], modelB: ['MKT', 'GROWTH'], lags: 'auto' });
 * // r.kind === 'sharpe': r.a.theta, r.b.theta, r.diff = r.a.theta − r.b.theta, r.z, r.p; r.shared = ['MKT']
 * // with modelB: ['MKT'] instead, r.kind === 'nested' and r.spanning tests CARRY's alpha on MKT
 */
import { normalTwoSidedP } from './distributions';
import { gmmFailure, GmmInputError, type GmmFailure, type GmmResult } from './errors';
import { hacFromColumns, resolveLag } from './hac';
import { cholesky, choleskySolve } from './linalg';
import { momentsFromPacked } from './moments';
import { spanningJointCore } from './spanning';
import { checkCollinear } from './validate';

/** θ̂ and its influence series for one set of factors (columns `idx` of a T×K row-major F). */
export interface SharpeCore {
  readonly theta: number;
  /** w = Σ_f^{-1} μ (|idx|). */
  readonly w: Float64Array;
  /** ψ_t (T). */
  readonly psi: Float64Array;
}

/**
 * θ̂ = μ'Σ_f^{-1}μ and ψ_t for the columns `idx` of the T×K row-major factor matrix F (with its
 * column means `meanF` and covariance `sigmaF`, divisor T). A singular Σ_f of the set comes back as
 * a typed 'singular' failure.
 */
export function squaredSharpeCore(
  F: Float64Array,
  T: number,
  K: number,
  meanF: ArrayLike<number>,
  sigmaF: ArrayLike<number>,
  idx: readonly number[],
): GmmResult<SharpeCore> {
  const k = idx.length;
  const S = new Float64Array(k * k);
  for (let a = 0; a < k; a++) for (let c = 0; c < k; c++) S[a * k + c] = sigmaF[idx[a] * K + idx[c]];
  const L = cholesky(S, k);
  if (!L) return gmmFailure('singular', 'The covariance matrix of the model’s factors is singular.', 'Sigma_f');
  const mu = Float64Array.from(idx, (j) => meanF[j]);
  const w = choleskySolve(L, k, mu, 1);
  let theta = 0;
  for (let a = 0; a < k; a++) theta += mu[a] * w[a];
  const psi = new Float64Array(T);
  for (let t = 0; t < T; t++) {
    let u = 0;
    const row = t * K;
    for (let a = 0; a < k; a++) u += w[a] * (F[row + idx[a]] - mu[a]);
    psi[t] = 2 * u - u * u + theta;
  }
  return { ok: true, theta, w, psi };
}

/** LRV(x)/T of one series (Bartlett HAC, not demeaned). */
export function seriesVarianceOfMean(x: Float64Array, T: number, lags: number): number {
  const S = hacFromColumns(T, 1, lags, (_a, buf) => buf.set(x.subarray(0, T)));
  return Math.max(0, S[0]) / T;
}

export interface SharpeInput {
  /** T×K factor series (decimals), every candidate the models are drawn from. */
  readonly factors: readonly (readonly number[])[];
  readonly factorNames: readonly string[];
  /** One flag per factor; every factor used must be traded. */
  readonly traded: readonly boolean[];
  /** Bartlett lag or 'auto' (floor(4 (T/100)^(2/9))); L < T/4. */
  readonly lags: number | 'auto';
}

export interface SquaredSharpeInput extends SharpeInput {
  /** The model's factors (names); default: all of them. */
  readonly model?: readonly string[];
}

/** One model's squared Sharpe ratio. */
export interface SquaredSharpe {
  readonly factors: readonly string[];
  readonly theta: number;
  readonly se: number;
}

export interface SharpeComparison {
  readonly ok: true;
  readonly kind: 'sharpe';
  readonly a: SquaredSharpe;
  readonly b: SquaredSharpe;
  /** θ̂_A − θ̂_B. */
  readonly diff: number;
  /** sqrt(LRV(ψ_A − ψ_B)/T). */
  readonly se: number;
  readonly z: number;
  /** Two-sided normal p of z. */
  readonly p: number;
  /** Factors in both models. */
  readonly shared: readonly string[];
  readonly T: number;
  readonly lags: number;
}

export interface NestedComparison {
  readonly ok: true;
  readonly kind: 'nested';
  /** Why the z test is not used. */
  readonly code: 'nested-models';
  readonly reason: string;
  readonly a: SquaredSharpe;
  readonly b: SquaredSharpe;
  /** Which model holds the other's factors. */
  readonly larger: 'a' | 'b';
  /** The joint spanning test of the larger model's extra factors on the smaller model's factors. */
  readonly spanning: {
    readonly factors: readonly string[];
    readonly on: readonly string[];
    readonly alpha: readonly number[];
    readonly stat: number;
    readonly df: number;
    readonly p: number;
  };
  readonly shared: readonly string[];
  readonly T: number;
  readonly lags: number;
}

/** The difference has (numerically) no sampling variance: both models' own factors add nothing. */
export interface DegenerateComparison {
  readonly ok: true;
  readonly kind: 'degenerate';
  readonly code: 'degenerate';
  readonly message: string;
  readonly a: SquaredSharpe;
  readonly b: SquaredSharpe;
  readonly shared: readonly string[];
}

export interface CompareModelsInput extends SharpeInput {
  readonly modelA: readonly string[];
  readonly modelB: readonly string[];
}

interface Prepared {
  T: number;
  K: number;
  lags: number;
  F: Float64Array;
  meanF: Float64Array;
  sigmaF: Float64Array;
}

function indexModel(input: SharpeInput, model: readonly string[], label: string): number[] {
  if (!Array.isArray(model) || model.length === 0) throw new GmmInputError('invalid-option', `${label} needs at least one factor.`);
  if (new Set(model).size !== model.length) throw new GmmInputError('invalid-option', `${label} names a factor twice.`);
  return model.map((name) => {
    const k = input.factorNames.indexOf(name);
    if (k < 0) throw new GmmInputError('unknown-factor', `${label} names '${name}', which is not among the factors.`, { series: name });
    if (!input.traded[k])
      throw new GmmInputError(
        'not-traded',
        `'${name}' is not a traded factor. The squared Sharpe ratio compares models whose factors are all excess returns (long-short or market-minus-cash portfolios); a non-traded factor has no Sharpe ratio of its own. Compare such models by their pricing of test assets instead.`,
        { series: name },
      );
    return k;
  });
}

function prepare(input: SharpeInput, used: readonly number[]): Prepared {
  if (!input || typeof input !== 'object') throw new GmmInputError('empty-input', 'No input.');
  const names = input.factorNames;
  const K = names.length;
  const rows = input.factors;
  if (!Array.isArray(rows) || rows.length === 0) throw new GmmInputError('empty-input', 'The factors are empty: need T rows of K factor values.');
  const T = rows.length;
  for (let t = 0; t < T; t++) {
    const r = rows[t];
    if (!Array.isArray(r) || r.length !== K)
      throw new GmmInputError('ragged-row', `Row ${t + 1} of the factors has ${Array.isArray(r) ? r.length : 0} values; expected ${K}.`, { row: t });
    for (const k of used)
      if (typeof r[k] !== 'number' || !Number.isFinite(r[k]))
        throw new GmmInputError('non-finite', `Row ${t + 1}, factor '${names[k]}': value ${String(r[k])} is not a finite number.`, { row: t, series: names[k] });
  }
  if (T <= used.length + 1)
    throw new GmmInputError('too-few-periods', `T = ${T} periods is too few for ${used.length} factors: need more than ${used.length + 1}.`);
  const lags = resolveLag(input.lags, T);
  const F = new Float64Array(T * K);
  for (let t = 0; t < T; t++) for (const k of used) F[t * K + k] = rows[t][k];
  const m = momentsFromPacked(new Float64Array(T), F, T, 1, K);
  // the factors in use must not be constant or collinear
  const u = used.length;
  const S = new Float64Array(u * u);
  for (let a = 0; a < u; a++) for (let c = 0; c < u; c++) S[a * u + c] = m.sigmaF[used[a] * K + used[c]];
  for (let a = 0; a < u; a++)
    if (!(S[a * u + a] > 0)) throw new GmmInputError('constant-series', `The factor '${names[used[a]]}' is constant; it carries no information.`, { series: names[used[a]] });
  checkCollinear(S, u, (j) => `'${names[used[j]]}'`, (j) => names[used[j]], 'factor');
  return { T, K, lags, F, meanF: m.meanF, sigmaF: m.sigmaF };
}

function estimateOne(p: Prepared, idx: readonly number[], names: readonly string[]): { est: SquaredSharpe; core: SharpeCore } | null {
  const core = squaredSharpeCore(p.F, p.T, p.K, p.meanF, p.sigmaF, idx);
  if (!core.ok) return null;
  const se = Math.sqrt(seriesVarianceOfMean(core.psi, p.T, p.lags));
  return { est: { factors: idx.map((k) => names[k]), theta: core.theta, se }, core };
}

/**
 * θ̂ = μ'Σ_f^{-1}μ of one model with its HAC standard error (see the module comment).
 * @throws GmmInputError ('not-traded' for a non-traded factor; shapes, non-finite values, lags).
 * @returns `{ ok: true, factors, theta, se }`, or a typed 'singular' failure (errors.ts) when Σ_f is singular.
 */
export function squaredSharpe(input: SquaredSharpeInput): GmmResult<SquaredSharpe> {
  const idx = indexModel(input, input.model ?? input.factorNames, 'The model');
  const p = prepare(input, idx);
  const one = estimateOne(p, idx, input.factorNames);
  return one ? { ok: true, ...one.est } : gmmFailure('singular', 'The covariance matrix of the factors is singular.', 'Σ_f');
}

/**
 * Compare two models by the squared Sharpe ratios of their factors (Barillas, Kan, Robotti and
 * Shanken 2020); for nested models, the joint spanning test instead.
 * @param input factors (T×K), names, traded flags, lag, and the two models' factor names.
 * @returns `{ ok: true, kind: 'sharpe', a, b, diff, se, z, p, shared }` for non-nested models;
 *   `{ ok: true, kind: 'nested', code: 'nested-models', reason, spanning, … }` when one model
 *   contains the other; `{ ok: true, kind: 'degenerate' }` when ψ_A − ψ_B has no variance; the
 *   typed failure `{ ok: false, code: 'singular', message }` (errors.ts) when a covariance is singular.
 * @throws GmmInputError 'not-traded' (a factor of either model is not traded), 'unknown-factor',
 *   'invalid-option' (empty model, a factor named twice, the two models identical), shape errors.
 */
export function compareModels(input: CompareModelsInput): SharpeComparison | NestedComparison | DegenerateComparison | GmmFailure {
  const ia = indexModel(input, input.modelA, 'Model A');
  const ib = indexModel(input, input.modelB, 'Model B');
  const names = input.factorNames;
  const inA = new Set(ia);
  const inB = new Set(ib);
  const shared = ia.filter((k) => inB.has(k)).map((k) => names[k]);
  const aInB = ia.every((k) => inB.has(k));
  const bInA = ib.every((k) => inA.has(k));
  if (aInB && bInA) throw new GmmInputError('invalid-option', 'The two models have the same factors: there is nothing to compare.');
  const union = [...new Set([...ia, ...ib])];
  const p = prepare(input, union);
  const A = estimateOne(p, ia, names);
  const B = estimateOne(p, ib, names);
  const singular = gmmFailure('singular', 'The covariance matrix of a model’s factors is singular.');
  if (!A || !B) return singular;
  if (aInB || bInA) {
    const larger = bInA ? 'a' : 'b';
    const big = larger === 'a' ? ia : ib;
    const small = new Set(larger === 'a' ? ib : ia);
    const extra = big.filter((k) => !small.has(k));
    // moments of the larger model's factors only: spanningCore regresses `extra` on all the others
    const Kb = big.length;
    const Fb = new Float64Array(p.T * Kb);
    for (let t = 0; t < p.T; t++) for (let j = 0; j < Kb; j++) Fb[t * Kb + j] = p.F[t * p.K + big[j]];
    const mb = momentsFromPacked(new Float64Array(p.T), Fb, p.T, 1, Kb);
    const set = extra.map((k) => big.indexOf(k));
    const js = spanningJointCore(mb, set, p.lags);
    if (!js.ok) return singular;
    const bigName = larger === 'a' ? 'A' : 'B';
    const smallName = larger === 'a' ? 'B' : 'A';
    return {
      ok: true,
      kind: 'nested',
      code: 'nested-models',
      reason: `Model ${smallName}'s factors are all in model ${bigName}, so the models are nested: equal squared Sharpe ratios mean that ${extra.map((k) => names[k]).join(', ')} ${extra.length === 1 ? 'is' : 'are'} spanned by model ${smallName}'s factors, and the z test of the difference does not apply (its variance vanishes under that hypothesis). The joint spanning test of the extra factors on model ${smallName}'s factors answers the question instead.`,
      a: A.est,
      b: B.est,
      larger,
      spanning: {
        factors: extra.map((k) => names[k]),
        on: [...small].map((k) => names[k]),
        alpha: js.alpha,
        stat: js.stat,
        df: js.df,
        p: js.p,
      },
      shared,
      T: p.T,
      lags: p.lags,
    };
  }
  const d = new Float64Array(p.T);
  for (let t = 0; t < p.T; t++) d[t] = A.core.psi[t] - B.core.psi[t];
  const v = seriesVarianceOfMean(d, p.T, p.lags);
  const diff = A.est.theta - B.est.theta;
  const scale = Math.max(A.est.se, B.est.se);
  if (!(v > 0) || Math.sqrt(v) <= 1e-10 * Math.max(scale, 1e-300))
    return {
      ok: true,
      kind: 'degenerate',
      code: 'degenerate',
      message: 'The difference of the two squared Sharpe ratios has no sampling variance here (neither model’s own factors add to the shared ones), so the normal test does not apply; test each model’s own factors for spanning by the shared ones instead.',
      a: A.est,
      b: B.est,
      shared,
    };
  const se = Math.sqrt(v);
  const z = diff / se;
  return { ok: true, kind: 'sharpe', a: A.est, b: B.est, diff, se, z, p: normalTwoSidedP(z), shared, T: p.T, lags: p.lags };
}

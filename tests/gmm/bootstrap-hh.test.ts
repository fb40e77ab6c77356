/**
 * Hall–Horowitz (1996) recentring and block correction in lib/gmm/bootstrap.ts.
 * Sources of the checks:
 * - identities that must hold: the recentred moment has bootstrap mean exactly zero (enumerating
 *   every possible resample of a tiny sample: iid and circular blocks), the exact block covariance
 *   Ω̃ equals the enumerated bootstrap variance, HH's map M satisfies M Ω̃ M' = Ω, the draw
 *   estimator with no recentring reproduces sdf-gmm's fitSdfGmm, a one-factor drop set gives the
 *   same bootstrap p as that factor's drop test (same statistic on the same draws);
 * - a direct double loop for the within-block HAC (the Newey–West Γ_j sum restricted to pairs in
 *   the same block, written out without the box-kernel trick);
 * - a seeded simulation with known truth (null true, uncentred form): bootstrap p-values of J and
 *   of the Wald and drop tests on b₂ roughly uniform (binomial 3-sd band at 5%; common practice).
 */
import { describe, expect, it } from 'vitest';
import {
  bootstrapSdfTests,
  exactBlockCovariance,
  fitRecentred,
  prepareBootstrap,
  withinBlockHac,
  type BootstrapInput,
} from '../../lib/gmm/bootstrap';
import { momentsFromPacked, prepareMoments } from '../../lib/gmm/moments';
import { fitSdfGmm, sdfMomentSeries } from '../../lib/gmm/sdf-gmm';
import { matMul, transpose } from '../../lib/gmm/linalg';
import { normalSampler, simulateEconomy, okOf } from './helpers';

/** Every index vector of `positions` blocks, each start in 0..T−1 (T^positions of them, equally likely). */
function* allStarts(T: number, positions: number): Generator<number[]> {
  const s = new Array<number>(positions).fill(0);
  for (;;) {
    yield [...s];
    let i = 0;
    while (i < positions && ++s[i] === T) s[i++] = 0;
    if (i === positions) return;
  }
}

function circularIndices(T: number, l: number, starts: number[]): number[] {
  const idx: number[] = [];
  for (const s of starts) for (let j = 0; j < l && idx.length < T; j++) idx.push((s + j) % T);
  return idx;
}

/** A tiny invented data set: T periods, N = 3 assets, K = 1 factor. */
function tiny(T: number, seed: number) {
  const z = normalSampler(seed);
  const factors = Array.from({ length: T }, () => [0.01 + 0.04 * z()]);
  const returns = factors.map(([f]) => [0.6 * f + 0.01 * z() + 0.002, 1.1 * f + 0.01 * z(), 1.4 * f + 0.01 * z() - 0.001]);
  return { returns, factors };
}

describe('recentring makes the null hold exactly in the bootstrap population (identity)', () => {
  for (const [scheme, T, l] of [['iid', 5, 1], ['circular blocks', 7, 3]] as const) {
    it(`uncentred m = 1 − b'f, ${scheme}: E*[g*_T(b̂) − g_T(b̂)] = 0 over all ${T}^${Math.ceil(T / l)} resamples`, () => {
      const { returns, factors } = tiny(T, 3);
      const m = prepareMoments(returns, factors);
      const fit = fitSdfGmm(m, { stage: 'second', lags: 0, form: 'uncentred' });
      if (!fit.ok) throw new Error('fit');
      const N = 3;
      expect(Math.max(...Array.from(fit.alpha, Math.abs))).toBeGreaterThan(1e-4); // over-identified: g_T(b̂) ≠ 0
      const sum = new Float64Array(N);
      let count = 0;
      for (const starts of allStarts(T, Math.ceil(T / l))) {
        const idx = circularIndices(T, l, starts);
        const R = new Float64Array(T * N);
        const F = new Float64Array(T);
        idx.forEach((src, r) => {
          for (let i = 0; i < N; i++) R[r * N + i] = returns[src][i];
          F[r] = factors[src][0];
        });
        const ms = momentsFromPacked(R, F, T, N, 1);
        // the draw's recentred moment at b̂: E*_T[R] − D* b̂ − g_T(b̂)
        for (let i = 0; i < N; i++) sum[i] += ms.meanR[i] - ms.crossRF[i] * fit.b[0] - fit.alpha[i];
        count += 1;
      }
      for (let i = 0; i < N; i++) expect(Math.abs(sum[i] / count)).toBeLessThan(1e-15);
    });
  }

  it('the exact block covariance Ω̃ equals the enumerated bootstrap variance of √T times the mean (T = 7, ℓ = 3)', () => {
    const T = 7;
    const l = 3;
    const z = normalSampler(8);
    const x = Float64Array.from({ length: T * 2 }, () => z());
    const V = new Float64Array(4);
    let count = 0;
    const mean = [0, 0];
    for (let t = 0; t < T; t++) for (let a = 0; a < 2; a++) mean[a] += x[t * 2 + a] / T;
    for (const starts of allStarts(T, Math.ceil(T / l))) {
      const idx = circularIndices(T, l, starts);
      const s = [0, 0];
      for (const src of idx) for (let a = 0; a < 2; a++) s[a] += x[src * 2 + a] - mean[a];
      for (let a = 0; a < 2; a++) for (let c = 0; c < 2; c++) V[a * 2 + c] += (s[a] * s[c]) / T;
      count += 1;
    }
    const Om = exactBlockCovariance(x, T, 2, l);
    for (let i = 0; i < 4; i++) expect(Om[i]).toBeCloseTo(V[i] / count, 12);
  });

  it('the within-block HAC equals the Γ_j sum over pairs inside the same block (direct double loop)', () => {
    const T = 23;
    const l = 5;
    const L = 2;
    const z = normalSampler(4);
    const x = Float64Array.from({ length: T * 2 }, () => z());
    const S = withinBlockHac(x, T, 2, L, l);
    const direct = new Float64Array(4);
    for (let t = 0; t < T; t++)
      for (let s = 0; s < T; s++) {
        const j = Math.abs(t - s);
        if (j > L || Math.floor(t / l) !== Math.floor(s / l)) continue;
        const w = 1 - j / (L + 1);
        for (let a = 0; a < 2; a++) for (let c = 0; c < 2; c++) direct[a * 2 + c] += (w * x[t * 2 + a] * x[s * 2 + c]) / T;
      }
    for (let i = 0; i < 4; i++) expect(S[i]).toBeCloseTo(direct[i], 12);
  });
});

describe('the draw estimator and the HH map', () => {
  const e = simulateEconomy({ T: 200, N: 6, K: 2, seed: 21, phi: 0.3 });
  const m = prepareMoments(e.returns, e.factors);

  it('with no recentring and no blocks it reproduces fitSdfGmm (first, second, iterated; both forms; three weightings)', () => {
    for (const form of ['centred', 'uncentred'] as const)
      for (const stage of ['first', 'second', 'iterated'] as const)
        for (const weighting of ['identity', 'second-moment', 'covariance'] as const) {
          const ref = fitSdfGmm(m, { stage, weighting, lags: 2, form });
          const own = fitRecentred(m, null, { stage, weighting, lags: 2, form, factorMeansKnown: false, block: null });
          if (!ref.ok || !own.ok) throw new Error('fit');
          for (let k = 0; k < 2; k++) {
            expect(own.b[k]).toBeCloseTo(ref.b[k], stage === 'iterated' ? 7 : 10);
            expect(own.covB[k * 2 + k] / ref.covB[k * 2 + k]).toBeCloseTo(1, stage === 'iterated' ? 5 : 9);
          }
          expect(own.J).toBeCloseTo(ref.J.stat, stage === 'iterated' ? 5 : 8);
        }
  });

  it("block scheme: HH's M maps the exact bootstrap variance onto the sample HAC (M Ω̃ M' = Ω)", () => {
    const input: BootstrapInput = {
      returns: e.returns,
      factors: e.factors,
      factorNames: ['F1', 'F2'],
      options: { stage: 'second', weighting: 'identity', lags: 2, form: 'centred', factorMeansKnown: false, scheme: 'block', blockLength: 5, draws: 19, seed: 1 },
    };
    const plan = okOf(prepareBootstrap(input)).plan;
    expect(plan.corrected).toBe(true);
    const Om = exactBlockCovariance(sdfMomentSeries(m, plan.fit.b, 'centred', false), 200, 6, 5);
    const M = plan.MJ!;
    const back = matMul(matMul(M, 6, 6, Om, 6), 6, 6, transpose(M, 6, 6), 6);
    for (let i = 0; i < 36; i++) expect(back[i]).toBeCloseTo(plan.fit.Sb[i], 12);
    // S_k / S̃_k: both are standard errors of the same b̂, so the ratio is near 1 (not exactly)
    for (const r of plan.ratioB) expect(r).toBeGreaterThan(0.5);
    for (const r of plan.ratioB) expect(r).toBeLessThan(2);
    const iid = okOf(prepareBootstrap({ ...input, options: { ...input.options, scheme: 'iid' } })).plan;
    expect(iid.corrected).toBe(false);
    expect(iid.MJ).toBeNull();
  });
});

describe('bootstrapSdfTests: λ, first-stage drop tests, joint drop set, uncentred form', () => {
  const e = simulateEconomy({ T: 240, N: 8, K: 2, seed: 11 });
  const base: BootstrapInput = {
    returns: e.returns,
    factors: e.factors,
    factorNames: ['F1', 'F2'],
    options: { stage: 'second', weighting: 'identity', lags: 0, form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 59, seed: 3 },
  };

  it('centred: a bootstrap-t p for each λ; a one-factor drop set has the same bootstrap p as that factor (identity)', () => {
    const r = okOf(bootstrapSdfTests({ ...base, options: { ...base.options, dropSet: ['F2'] } })).bootstrap;
    expect(r.form).toBe('centred');
    expect(r.correction).toBe('none');
    for (const f of r.factors) {
      expect(f.lambda).not.toBeNull();
      expect(f.lambda!.bootstrapP).toBeGreaterThan(0);
      expect(f.lambda!.bootstrapP).toBeLessThanOrEqual(1);
    }
    expect(r.joint!.factors).toEqual(['F2']);
    expect(r.joint!.drop!.df).toBe(1);
    expect(r.joint!.drop!.stat).toBeCloseTo(r.factors[1].drop!.stat, 10);
    expect(r.joint!.drop!.bootstrapP).toBe(r.factors[1].drop!.bootstrapP);
    // one-coefficient Wald: W = t², W* = t*², so the p-values coincide
    expect(r.joint!.wald!.stat).toBeCloseTo(r.factors[1].wald.stat ** 2, 8);
    expect(r.joint!.wald!.bootstrapP).toBe(r.factors[1].wald.bootstrapP);
    const both = okOf(bootstrapSdfTests({ ...base, options: { ...base.options, dropSet: ['F1', 'F2'] } })).bootstrap;
    expect(both.joint!.drop!.df).toBe(2);
    expect(both.joint!.wald!.df).toBe(2);
  });

  it('uncentred form runs (no λ test, a note says why) and block + HH correction runs at every stage', () => {
    const u = okOf(bootstrapSdfTests({ ...base, options: { ...base.options, form: 'uncentred' } })).bootstrap;
    expect(u.form).toBe('uncentred');
    expect(u.factors.every((f) => f.lambda === null)).toBe(true);
    expect(u.notes.join(' ')).toMatch(/no bootstrap test of λ/);
    expect(u.J.bootstrapP).toBeGreaterThan(0);
    for (const stage of ['first', 'second', 'iterated'] as const) {
      const b = okOf(bootstrapSdfTests({ ...base, options: { ...base.options, stage, lags: 2, scheme: 'block', blockLength: 6, form: stage === 'second' ? 'uncentred' : 'centred', dropSet: ['F1', 'F2'] } })).bootstrap;
      expect(b.correction).toBe('hall-horowitz');
      expect(b.validDraws).toBe(59);
      expect(b.factors.every((f) => f.drop !== null)).toBe(true);
      expect(b.joint!.drop).not.toBeNull();
    }
  });
});

describe('size under a simulated null, uncentred form (known truth)', () => {
  it('bootstrap p-values of J, Wald on b₂ and drop 2 reject near 5%', () => {
    // m = 1 − b₁ f₁ prices the assets exactly (E[R] = E[R f₁] b₁ with b₂ = 0); invented economy.
    const M = 120;
    const pJ: number[] = [];
    const pW: number[] = [];
    const pD: number[] = [];
    for (let s = 0; s < M; s++) {
      const z = normalSampler(7000 + s);
      const T = 240;
      const N = 6;
      const b1 = 3;
      const betas = Array.from({ length: N }, (_, i) => [0.2 + (i / N) * 1.6, 1.5 - (((i * 5) % N) / N) * 1.6]);
      const factors: number[][] = [];
      const shocks: number[][] = [];
      for (let t = 0; t < T; t++) {
        const e1 = z();
        const e2 = 0.5 * e1 + Math.sqrt(0.75) * z();
        factors.push([0.005 + 0.04 * e1, 0.002 + 0.03 * e2]);
        shocks.push(betas.map((bi) => bi[0] * 0.04 * e1 + bi[1] * 0.03 * e2 + 0.006 * z()));
      }
      // choose the constant a_i so that the sample moment E_T[R_i (1 − b₁ f₁)] = 0 holds in population:
      // population E[R_i(1 − b₁f₁)] = a_i(1 − b₁ μ₁) − b₁ Cov(R_i, f₁) = 0
      const mu1 = 0.005;
      const returns = shocks.map((row) => row.map((v, i) => v + (b1 * (betas[i][0] * 0.04 ** 2 + betas[i][1] * 0.5 * 0.04 * 0.03)) / (1 - b1 * mu1)));
      const r = okOf(bootstrapSdfTests({
        returns,
        factors,
        factorNames: ['F1', 'F2'],
        options: { stage: 'second', weighting: 'identity', lags: 0, form: 'uncentred', factorMeansKnown: false, scheme: 'iid', draws: 49, seed: 900 + s },
      })).bootstrap;
      pJ.push(r.J.bootstrapP);
      pW.push(r.factors[1].wald.bootstrapP);
      pD.push(r.factors[1].drop!.bootstrapP);
    }
    const band = 3 * Math.sqrt((0.05 * 0.95) / M);
    for (const [name, ps] of [['J', pJ], ['Wald b2', pW], ['drop 2', pD]] as const) {
      const rate = ps.filter((p) => p <= 0.05).length / M;
      expect(rate, `${name} rejection rate ${rate}`).toBeGreaterThan(Math.max(0, 0.05 - band));
      expect(rate, `${name} rejection rate ${rate}`).toBeLessThan(0.05 + band);
    }
  });
});


/**
 * The @example of every estimator module's TSDoc block, asserted (so the documentation cannot
 * drift from the code). Hand-computed values are derived in the comments.
 */
import { describe, expect, it } from 'vitest';
import { chiSquareDifference, estimateSdfGmm, factorVerdict, famaMacBethCore, grsTest, hjDistance, longRunCovariance, premiaFromLoadings, prepareMoments, secondMomentMatrix, spanningTest, thinBetaTest, validateMatrices, VERDICTS, waldJoint, waldSingle, GmmInputError } from '../../lib/gmm/index';
import { estimateLedger, normalSampler, okOf, simulateEconomy } from './helpers';

describe('module examples', () => {
  it('hac: Γ₀ = 1, Γ₁ = −0.75, S = 1 + 0.5·(−1.5) = 0.25 (hand computation)', () => {
    expect(longRunCovariance([[1], [-1], [1], [-1]], { lags: 1 })[0][0]).toBeCloseTo(0.25, 15);
    // L = 0 is White's estimate: mean of squares = 1
    expect(longRunCovariance([[1], [-1], [1], [-1]], { lags: 0 })[0][0]).toBeCloseTo(1, 15);
    // demeaned: mean 0 already, same number
    expect(longRunCovariance([[1], [-1], [1], [-1]], { lags: 1, demean: true })[0][0]).toBeCloseTo(0.25, 15);
  });

  it('moments: means, Σ_f and C with divisor T', () => {
    const m = prepareMoments([[0.01], [0.03]], [[0.02], [0.04]]);
    expect(m.meanR[0]).toBeCloseTo(0.02, 15);
    expect(m.meanF[0]).toBeCloseTo(0.03, 15);
    expect(m.sigmaF[0]).toBeCloseTo(1e-4, 15);
    expect(m.covRF[0]).toBeCloseTo(1e-4, 15);
  });

  it('sdf-gmm: exactly identified → J = { 0, 0, 1 }', () => {
    const r = estimateSdfGmm({ returns: [[0.02], [0.01], [0.04], [0.03]], factors: [[0.01], [0], [0.03], [0.02]], options: { stage: 'second', lags: 0 } });
    expect(r.ok).toBe(true);
    if (r.ok) {
      expect(r.J).toEqual({ stat: 0, df: 0, p: 1 });
      // E[R] = 0.025 = C b with C = Var(f) = 1.25e-4 → b = 200
      expect(r.b[0]).toBeCloseTo(200, 9);
    }
  });

  it('premia: λ = Σ_f b = 4e-4 · 2.5 = 1e-3', () => {
    expect(premiaFromLoadings([4e-4], 1, [2.5])[0]).toBeCloseTo(1e-3, 15);
  });

  it('wald: t = 0.5/0.25 = 2, p = 0.0455; joint on index 0 of diag(1, 4): stat 1, p 0.3173', () => {
    const w = waldSingle(0.5, 0.25);
    expect(w.t).toBe(2);
    expect(w.p).toBeCloseTo(0.0455, 4); // normal table: 2·(1 − Φ(2)) = 0.0455
    const j = waldJoint([1, 0], [[1, 0], [0, 4]], 2, [0]);
    if (!j.ok) throw new Error(j.message);
    expect(j.stat).toBe(1);
    expect(j.df).toBe(1);
    expect(j.p).toBeCloseTo(0.3173, 4); // χ²(1) upper tail at 1 = 2·(1 − Φ(1)) = 0.3173
  });

  it('drop-test: W* = I, g_r = (0, 2) → D = 10 · 4 = 40', () => {
    const d = okOf(chiSquareDifference({ T: 10, N: 2, K: 2, X: [1, 0, 0, 1], W: [1, 0, 0, 1], meanR: [1, 2] }, [1]));
    expect(d.stat).toBeCloseTo(40, 12);
    expect(d.df).toBe(1);
  });

  it('spanning: B = 0.5·A + 0.01 + noise → alpha ≈ 0.01, se ≈ 0.005/√T', () => {
    const z = normalSampler(3);
    const T = 2000;
    const factors = Array.from({ length: T }, () => {
      const a = 0.005 + 0.04 * z();
      return [a, 0.5 * a + 0.01 + 0.005 * z()];
    });
    const r = spanningTest({ factors, factorNames: ['A', 'B'], traded: [true, true], lags: 0, test: ['B'] });
    if (!('se' in r)) throw new Error('expected the single test');
    expect(Math.abs(r.alpha - 0.01)).toBeLessThan((3 * 0.005) / Math.sqrt(T));
    expect(r.se).toBeGreaterThan((0.8 * 0.005) / Math.sqrt(T));
    expect(r.se).toBeLessThan((1.2 * 0.005) / Math.sqrt(T));
    expect(r.p).toBeLessThan(1e-6);
    // the joint version over both factors (intercepts = means) is a χ²(2)
    const j = spanningTest({ factors, factorNames: ['A', 'B'], traded: [true, true], lags: 0, test: ['A', 'B'] });
    expect('df' in j && j.df).toBe(2);
  });

  it('thin-beta: a loaded factor is not flagged; an independent one mostly is', () => {
    let flagged = 0;
    const seeds = 40;
    for (let s = 0; s < seeds; s++) {
      const z = normalSampler(100 + s);
      const T = 500;
      const factors = Array.from({ length: T }, () => [0.005 + 0.04 * z(), 0.003 + 0.03 * z()]);
      const returns = factors.map((f) => Array.from({ length: 5 }, (_, i) => (0.6 + 0.2 * i) * f[0] + 0.02 * z()));
      const m = prepareMoments(returns, factors);
      const loaded = okOf(thinBetaTest(m, 0, 0));
      expect(loaded.flag).toBe(false);
      expect(loaded.p).toBeLessThan(1e-6);
      if (okOf(thinBetaTest(m, 1, 0)).flag) flagged++;
    }
    // p uniform under the null → flagged with probability 0.9; binomial(40, 0.9) ≥ 30 w.p. > 0.99
    expect(flagged).toBeGreaterThanOrEqual(30);
  });

  it('grs: df1 = N, df2 = T − N − K, stat near 1 under the null', () => {
    const eco = simulateEconomy({ T: 600, N: 10, K: 1, seed: 4, alphaScale: 0 });
    const r = grsTest({ returns: eco.returns, factors: eco.factors, factorNames: ['MKT'], traded: [true] });
    if (!('df1' in r)) throw new Error('singular');
    expect(r.df1).toBe(10);
    expect(r.df2).toBe(589);
    expect(r.stat).toBeGreaterThan(0);
    expect(r.stat).toBeLessThan(4); // F(10, 589) 0.9999 quantile ≈ 3.5
  });

  it('fama-macbeth: one factor, no intercept: λ̂ = mean_t (Σ β_i R_it / Σ β_i²)', () => {
    const eco = simulateEconomy({ T: 200, N: 6, K: 1, seed: 6 });
    const m = prepareMoments(eco.returns, eco.factors);
    const fm = okOf(famaMacBethCore(m, ['MKT'], false));
    const beta = Array.from({ length: m.N }, (_, i) => m.covRF[i] / m.sigmaF[0]);
    const bb = beta.reduce((s, b) => s + b * b, 0);
    const lam = eco.returns.map((r) => r.reduce((s, v, i) => s + beta[i] * v, 0) / bb);
    const mean = lam.reduce((s, v) => s + v, 0) / lam.length;
    expect(fm.factors[0].lambda).toBeCloseTo(mean, 14);
    const sd = Math.sqrt(lam.reduce((s, v) => s + (v - mean) ** 2, 0) / (lam.length - 1));
    expect(fm.factors[0].se).toBeCloseTo(sd / Math.sqrt(lam.length), 14);
    expect(fm.zeroBeta).toBeNull();
  });

  it('hj-distance: N = K → 0', () => {
    const eco = simulateEconomy({ T: 100, N: 2, K: 2, seed: 2 });
    const m = prepareMoments(eco.returns, eco.factors);
    expect(okOf(hjDistance(m, secondMomentMatrix(m.R, m.T, m.N))).distance).toBeLessThan(1e-12);
  });

  it('verdict: the four combinations', () => {
    expect(factorVerdict(0.01, 0.001, 0.05)).toBe('needed and priced');
    expect(factorVerdict(0.4, 0.001, 0.05)).toBe('priced, not needed');
    expect(factorVerdict(0.01, 0.3, 0.05)).toBe('needed, not priced alone');
    expect(factorVerdict(0.4, 0.3, 0.05)).toBe('neither');
    expect(VERDICTS).toHaveLength(4);
  });

  it('validate: a clean input passes, NaN is refused', () => {
    expect(validateMatrices([[0.01, 0.02], [0.03, 0.01], [0.02, 0.02], [0.0, 0.01]], [[0.01], [0.02], [0.02], [0.0]])).toEqual({ T: 4, N: 2, K: 1 });
    expect(() => validateMatrices([[0.01], [NaN]], [[0.0], [0.1]])).toThrow(GmmInputError);
  });

  it('ledger: verdicts are glossary names and the result round-trips through JSON', () => {
    const eco = simulateEconomy({ T: 300, N: 6, K: 2, seed: 1 });
    const r = estimateLedger({
      assetNames: eco.returns[0].map((_, i) => `Fund ${i + 1}`), returns: eco.returns, factorNames: ['MKT', 'CARRY'],
      factors: eco.factors, traded: [true, true],
      options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, level: 0.05 },
    });
    for (const f of r.factors) expect(VERDICTS).toContain(f.verdict);
    expect(JSON.parse(JSON.stringify(r))).toEqual(r);
    expect(r.lags).toBe(Math.floor(4 * Math.pow(300 / 100, 2 / 9)));
  });
});

/**
 * Identities that must hold whatever the data (methods contract, "Reference checks").
 */
import { describe, expect, it } from 'vitest';
import { fitSdfGmm, GmmInputError, hjDistance, olsFit, prepareMoments, secondMomentMatrix, selectFactors, toNested } from '../../lib/gmm/index';
import { spdInverse } from '../../lib/gmm/linalg';
import { estimateLedger, maxRel, okOf, runReference, simulateEconomy } from './helpers';

const base = { weighting: 'identity', form: 'centred', factorMeansKnown: false, level: 0.05 } as const;

describe('identities', () => {
  it('exactly identified model (N = K) gives J = 0 at every stage, and HJ = 0', () => {
    // Identity: with N = K, b̂ solves E[R] = C b exactly, so α̂ = 0 (Hansen 1982).
    const eco = simulateEconomy({ T: 300, N: 2, K: 2, seed: 7 });
    for (const stage of ['first', 'second', 'iterated'] as const) {
      const r = estimateLedger({
        assetNames: ['A', 'B'], returns: eco.returns, factorNames: ['F1', 'F2'], factors: eco.factors,
        traded: [true, true], options: { ...base, stage, lags: 2 },
      });
      expect(r.J.df).toBe(0);
      expect(r.J.stat).toBe(0);
      expect(r.J.p).toBe(1);
      for (const p of r.pricingErrors) expect(Math.abs(p.alpha)).toBeLessThan(1e-15);
      expect(r.hj!).toBeLessThan(1e-12);
    }
  });

  it('iterated GMM at convergence: influence variance = (C\'Ŝ⁻¹C)⁻¹/T (Hansen 1982 efficient GMM)', () => {
    const eco = simulateEconomy({ T: 800, N: 8, K: 3, seed: 8 });
    const m = prepareMoments(eco.returns, eco.factors);
    const fit = fitSdfGmm(m, { stage: 'iterated', lags: 3 });
    if (!fit.ok) throw new Error('fit failed');
    expect(fit.converged).toBe(true);
    expect(fit.iterations).toBeGreaterThan(1);
    const { N, K, T } = fit;
    const Si = spdInverse(fit.Sb, N)!;
    // (C' S⁻¹ C)⁻¹ / T
    const A = new Float64Array(K * K);
    for (let a = 0; a < K; a++)
      for (let c = 0; c < K; c++) {
        let s = 0;
        for (let i = 0; i < N; i++) for (let j = 0; j < N; j++) s += fit.X[i * K + a] * Si[i * N + j] * fit.X[j * K + c];
        A[a * K + c] = s;
      }
    const Ai = spdInverse(A, K)!.map((v) => v / T);
    // agreement "to rounding": b moved < 1e-10 at the last step, so 1e-7 relative is ample
    expect(maxRel(fit.covB, Ai)).toBeLessThan(1e-7);
  });

  it('first stage with W = I equals OLS of mean returns on covariances without intercept (QR, numpy lstsq)', () => {
    const eco = simulateEconomy({ T: 400, N: 10, K: 3, seed: 9 });
    const m = prepareMoments(eco.returns, eco.factors);
    const fit = fitSdfGmm(m, { stage: 'first', weighting: 'identity', lags: 0 });
    if (!fit.ok) throw new Error('fit failed');
    const ols = olsFit(Array.from(m.meanR), toNested(m.covRF, m.N, m.K));
    if (!ols.ok) throw new Error('ols failed');
    expect(maxRel(fit.b, ols.coef)).toBeLessThan(1e-10);
    const ref = runReference('identities-ols-mean-on-cov', {
      returns: eco.returns, factors: eco.factors, traded: [true, true, true], lags: 0, stage: 'first',
      weighting: 'identity', form: 'centred', factorMeansKnown: false, dropSets: [],
    });
    expect(maxRel(fit.b, ref.olsMeanOnCov, 'OLS mean on cov (numpy lstsq)')).toBeLessThan(1e-8);
  });

  it('selectFactors (shared moments for a subset sweep) equals recomputing on the subset', () => {
    const eco = simulateEconomy({ T: 300, N: 7, K: 4, seed: 14 });
    const full = prepareMoments(eco.returns, eco.factors);
    const sub = selectFactors(full, [3, 1]);
    const direct = prepareMoments(eco.returns, eco.factors.map((f) => [f[3], f[1]]));
    for (const key of ['meanF', 'sigmaF', 'covRF', 'crossRF', 'Fc'] as const) expect(maxRel(sub[key], direct[key])).toBeLessThan(1e-12);
    const a = fitSdfGmm(sub, { stage: 'second', lags: 2 });
    const b = fitSdfGmm(direct, { stage: 'second', lags: 2 });
    if (!a.ok || !b.ok) throw new Error('fit failed');
    expect(maxRel(a.b, b.b)).toBeLessThan(1e-10);
  });

  it('HJ distance equals the objective of the second-moment-weighted first stage', () => {
    const eco = simulateEconomy({ T: 300, N: 6, K: 2, seed: 10 });
    const m = prepareMoments(eco.returns, eco.factors);
    const E = secondMomentMatrix(m.R, m.T, m.N);
    const fit = fitSdfGmm(m, { stage: 'first', weighting: 'second-moment', lags: 0 });
    if (!fit.ok) throw new Error('fit failed');
    const Wi = spdInverse(E, m.N)!;
    let q = 0;
    for (let i = 0; i < m.N; i++) for (let j = 0; j < m.N; j++) q += fit.alpha[i] * Wi[i * m.N + j] * fit.alpha[j];
    expect(maxRel(okOf(hjDistance(m, E)).distance, Math.sqrt(q))).toBeLessThan(1e-12);
  });

  it('drop test at the unrestricted fit: D = T·g_r\'W*g_r − J (common weighting, Newey–West 1987)', () => {
    const eco = simulateEconomy({ T: 500, N: 8, K: 2, seed: 12 });
    const options = { ...base, stage: 'second', lags: 2 } as const;
    const r = estimateLedger({
      assetNames: eco.returns[0].map((_, i) => `P${i}`), returns: eco.returns, factorNames: ['F1', 'F2'],
      factors: eco.factors, traded: [true, true], options: { ...options, dropSet: ['F1', 'F2'] },
    });
    // At the second stage W* is the reported fit's weighting Ŝ⁻¹ and the unrestricted estimate
    // under W* is b̂ itself, so J = T·α̂'W*α̂ and the drop test is D = T·g_r'W*g_r − J with g_r the
    // restricted pricing errors, b̂_r = (X_r'W*X_r)⁻¹X_r'W*E[R] (computed here by a separate solve).
    const m = prepareMoments(eco.returns, eco.factors);
    const fit = fitSdfGmm(m, options);
    if (!fit.ok) throw new Error('fit failed');
    const { N, T } = fit;
    const W = fit.W;
    const quad = (g: ArrayLike<number>) => {
      let q = 0;
      for (let i = 0; i < N; i++) for (let j = 0; j < N; j++) q += g[i] * W[i * N + j] * g[j];
      return q;
    };
    expect(maxRel(r.J.stat, T * quad(fit.alpha), 'J = T α̂\'W α̂')).toBeLessThan(1e-12);
    // Dropping every factor leaves g_r = E[R]
    expect(maxRel(r.jointDrop!.chi2Drop!.stat, T * quad(m.meanR) - r.J.stat, 'joint D')).toBeLessThan(1e-10);
    // Dropping factor k keeps the other column x_j of X: b̂_r = x_j'W*E[R] / x_j'W*x_j
    for (const [k, f] of r.factors.entries()) {
      const keep = 1 - k;
      const x = Array.from({ length: N }, (_, i) => fit.X[i * 2 + keep]);
      let num = 0;
      let den = 0;
      for (let i = 0; i < N; i++)
        for (let j = 0; j < N; j++) {
          num += x[i] * W[i * N + j] * m.meanR[j];
          den += x[i] * W[i * N + j] * x[j];
        }
      const gr = x.map((xi, i) => m.meanR[i] - xi * (num / den));
      expect(f.chi2Drop!.stat).toBeGreaterThan(0);
      expect(maxRel(f.chi2Drop!.stat, T * quad(gr) - r.J.stat, `D drop ${f.name}`)).toBeLessThan(1e-9);
    }
  });

  it('a factor that is an exact linear combination of the others is refused, naming it (not NaN)', () => {
    const eco = simulateEconomy({ T: 200, N: 5, K: 2, seed: 13 });
    const factors = eco.factors.map((f) => [f[0], f[1], 2 * f[0] - 0.5 * f[1]]);
    const call = () =>
      estimateLedger({
        assetNames: ['A', 'B', 'C', 'D', 'E'], returns: eco.returns, factorNames: ['MKT', 'CARRY', 'MIX'], factors,
        traded: [true, true, true], options: { ...base, stage: 'second', lags: 1 },
      });
    expect(call).toThrow(GmmInputError);
    try {
      call();
    } catch (e) {
      expect((e as GmmInputError).code).toBe('collinear-factor');
      expect((e as GmmInputError).series).toBe('MIX');
      expect((e as Error).message).toMatch(/'MIX' is an exact linear combination of 'MKT', 'CARRY'/);
    }
  });
});

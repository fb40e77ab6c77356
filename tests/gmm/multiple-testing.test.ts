/**
 * Adjusted p-values (lib/gmm/multiple-testing.ts; Holm 1979, Benjamini and Yekutieli 2001)
 * against statsmodels' `multipletests` (Debian python3-statsmodels, methods 'holm' and
 * 'fdr_by'), run once on seeded random p-vectors with ties, zeros, ones and lengths past numpy's
 * pairwise-summation block (128), to 1e-15 absolute; and the ledger's pHolm / pBY.
 */
import { describe, expect, it } from 'vitest';
import { adjustPValues, benjaminiYekutieliAdjust, GmmInputError, HLZ_T_HURDLE, holmAdjust, pairwiseSum } from '../../lib/gmm/index';
import { estimateLedger, mulberry32, runReference, simulateEconomy } from './helpers';

const u = mulberry32(2024);
const vectors: number[][] = [
  [0.5],
  [0.01, 0.04, 0.03], // the TSDoc example
  [0.02, 0.02, 0.02, 0.5],
  [0, 1, 0.3, 0.3, 0],
];
for (const n of [2, 5, 7, 8, 9, 13, 16, 40, 129, 200, 300]) {
  // small p-values (some Holm products pass 1), and ties by rounding to 2 decimals
  vectors.push(Array.from({ length: n }, () => u() ** 3));
  vectors.push(Array.from({ length: n }, () => Math.round(100 * u() ** 2) / 100));
}
const ref = runReference('multipletests', { task: 'multipletests', pvalues: vectors }) as { holm: number[]; by: number[] }[];

const maxAbs = (a: readonly number[], b: readonly number[]) => {
  expect(a).toHaveLength(b.length);
  return a.reduce((m, v, i) => Math.max(m, Math.abs(v - b[i])), 0);
};

describe('Holm and Benjamini–Yekutieli against statsmodels multipletests (holm, fdr_by)', () => {
  vectors.forEach((p, i) => {
    it(`vector ${i + 1} (n = ${p.length}${new Set(p).size < p.length ? ', with ties' : ''}): equal to 1e-15`, () => {
      expect(maxAbs(holmAdjust(p), ref[i].holm)).toBeLessThanOrEqual(1e-15);
      expect(maxAbs(benjaminiYekutieliAdjust(p), ref[i].by)).toBeLessThanOrEqual(1e-15);
    });
  });

  it('the TSDoc example, by hand: Holm [0.03, 0.06, 0.06]; BY c(3) = 11/6', () => {
    // sorted 0.01, 0.03, 0.04: 3·0.01 = 0.03, max(0.03, 2·0.03) = 0.06, max(0.06, 1·0.04) = 0.06
    holmAdjust([0.01, 0.04, 0.03]).forEach((v, i) => expect(v).toBeCloseTo([0.03, 0.06, 0.06][i], 15));
    const by = benjaminiYekutieliAdjust([0.01, 0.04, 0.03]);
    expect(by[0]).toBeCloseTo(0.01 * 3 * (11 / 6), 15);
    expect(by[1]).toBeCloseTo(0.04 * (11 / 6), 15);
    expect(by[2]).toBeCloseTo(0.04 * (11 / 6), 15); // step-up: min over the larger p's (0.03·3/2·c = 0.0825 > 0.0733)
  });

  it('monotone in the raw p, never below it, capped at 1; ties share one adjusted value', () => {
    for (const p of vectors) {
      const { holm, by } = adjustPValues(p);
      const idx = p.map((_, i) => i).sort((a, b) => p[a] - p[b]);
      for (let j = 1; j < idx.length; j++) {
        expect(holm[idx[j]]).toBeGreaterThanOrEqual(holm[idx[j - 1]]);
        expect(by[idx[j]]).toBeGreaterThanOrEqual(by[idx[j - 1]]);
        if (p[idx[j]] === p[idx[j - 1]]) {
          expect(holm[idx[j]]).toBe(holm[idx[j - 1]]);
          expect(by[idx[j]]).toBe(by[idx[j - 1]]);
        }
      }
      p.forEach((v, i) => {
        expect(holm[i]).toBeGreaterThanOrEqual(v);
        expect(by[i]).toBeGreaterThanOrEqual(v);
        expect(holm[i]).toBeLessThanOrEqual(1);
        expect(by[i]).toBeLessThanOrEqual(1);
      });
    }
  });

  it('pairwise summation equals the exact harmonic number H(300) to rounding', () => {
    const x = Float64Array.from({ length: 300 }, (_, j) => 1 / (j + 1));
    // H(300) = 6.2826638802... (ln 300 + γ + 1/600 − 1/(12·300²), Euler–Maclaurin)
    const em = Math.log(300) + 0.5772156649015329 + 1 / 600 - 1 / (12 * 300 * 300);
    expect(Math.abs(pairwiseSum(x) - em)).toBeLessThan(1e-10);
  });

  it('refuses a p-value outside [0, 1] or NaN with GmmInputError; an empty family gives []', () => {
    expect(() => holmAdjust([0.1, 1.2])).toThrow(GmmInputError);
    expect(() => benjaminiYekutieliAdjust([NaN])).toThrow(/p-value 1/);
    expect(holmAdjust([])).toEqual([]);
    expect(benjaminiYekutieliAdjust([])).toEqual([]);
  });

  it('the Harvey–Liu–Zhu hurdle is the constant 3.0 (a reference line)', () => {
    expect(HLZ_T_HURDLE).toBe(3);
  });
});

describe('ledger: pHolm and pBY across the factors on the verdict basis', () => {
  const eco = simulateEconomy({ T: 360, N: 8, K: 4, seed: 77, alphaScale: 0.003 });
  const base = {
    assetNames: eco.returns[0].map((_, i) => `P${i + 1}`),
    returns: eco.returns,
    factorNames: ['A', 'B', 'C', 'D'],
    factors: eco.factors,
    traded: [true, true, true, false],
  };
  it('second stage: adjusts the standard p of b', () => {
    const r = estimateLedger({ ...base, options: { stage: 'second', weighting: 'identity', lags: 3, form: 'centred', factorMeansKnown: false, level: 0.05 } });
    expect(r.adjustedBasis).toBe('standard');
    const p = r.factors.map((f) => f.pB);
    expect(r.factors.map((f) => f.pHolm)).toEqual(holmAdjust(p));
    expect(r.factors.map((f) => f.pBY)).toEqual(benjaminiYekutieliAdjust(p));
  });
  it('first stage (robust basis): adjusts the robust p of b; on the standard basis the standard p', () => {
    const r = estimateLedger({ ...base, options: { stage: 'first', weighting: 'covariance', lags: 3, form: 'centred', factorMeansKnown: false, level: 0.05 } });
    expect(r.verdictBasis).toBe('robust');
    expect(r.adjustedBasis).toBe('robust');
    const p = r.factors.map((f) => f.robust!.pB);
    expect(p).not.toEqual(r.factors.map((f) => f.pB));
    expect(r.factors.map((f) => f.pHolm)).toEqual(holmAdjust(p));
    expect(r.factors.map((f) => f.pBY)).toEqual(benjaminiYekutieliAdjust(p));
    const s = estimateLedger({ ...base, options: { stage: 'first', weighting: 'covariance', lags: 3, form: 'centred', factorMeansKnown: false, level: 0.05, basis: 'standard' } });
    expect(s.adjustedBasis).toBe('standard');
    expect(s.factors.map((f) => f.pHolm)).toEqual(holmAdjust(s.factors.map((f) => f.pB)));
  });
});

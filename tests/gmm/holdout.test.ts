/**
 * Hold-out pricing (lib/gmm/holdout.ts; Kozak, Nagel and Santosh 2020): b̂ on the periods before
 * the split, α₂ and R²_oos on the periods after it, against numpy (tests/reference/gmm_reference.py
 * `holdout_task`: its own GMM on the estimation periods, then m₂ − C₂ b̂ or m₂ − D₂ b̂; one process
 * for every case) to 1e-8 relative; the identity R²_oos = 1 − ê'ê / m'm when the estimation sample
 * prices itself; refused splits; the rolling version against single splits.
 */
import { describe, expect, it } from 'vitest';
import { GmmInputError, holdoutFromMoments, holdoutPricing, prepareMoments, rollingHoldout, type HoldoutOptions } from '../../lib/gmm/index';
import { gmmFailureMessage } from '../../shared/gmm-messages';
import { estimateLedger, maxRel, runReference, simulateEconomy } from './helpers';

const TOL = 1e-8;

interface Case {
  name: string;
  seed: number;
  T: number;
  N: number;
  K: number;
  split: number;
  options: HoldoutOptions & { lags: number };
}
const cases: Case[] = [
  { name: 'centred, second stage, L = 3', seed: 5, T: 480, N: 10, K: 2, split: 300, options: { stage: 'second', weighting: 'identity', lags: 3, form: 'centred', factorMeansKnown: false } },
  { name: 'centred, first stage, covariance weighting, L = 0', seed: 6, T: 360, N: 8, K: 3, split: 180, options: { stage: 'first', weighting: 'covariance', lags: 0, form: 'centred', factorMeansKnown: false } },
  { name: 'uncentred (D₂), iterated, second-moment, L = 2', seed: 7, T: 420, N: 9, K: 2, split: 250, options: { stage: 'iterated', weighting: 'second-moment', lags: 2, form: 'uncentred', factorMeansKnown: false } },
  { name: 'centred, factor means known, second stage, L = 1', seed: 8, T: 300, N: 6, K: 2, split: 200, options: { stage: 'second', weighting: 'identity', lags: 1, form: 'centred', factorMeansKnown: true } },
];
const eco = cases.map((c) => simulateEconomy({ T: c.T, N: c.N, K: c.K, seed: c.seed, alphaScale: 0.002 }));
const refs = runReference('holdout', cases.map((c, i) => ({ task: 'holdout', returns: eco[i].returns, factors: eco[i].factors, split: c.split, ...c.options })));

describe.each(cases.map((c, i) => ({ ...c, i })))('hold-out pricing against numpy: $name', (c) => {
  const ref = refs[c.i];
  const names = Array.from({ length: c.K }, (_, k) => `F${k + 1}`);
  const r = holdoutPricing({ returns: eco[c.i].returns, factors: eco[c.i].factors, factorNames: names, split: { index: c.split }, options: c.options });
  it('b̂ (estimation periods), α₂, m₂, mean |α₂| and R²_oos agree to 1e-8; T₁ + T₂ = T', () => {
    if (!r.ok) throw new Error(r.message);
    expect(maxRel(r.b, ref.b, 'holdout b')).toBeLessThan(TOL);
    expect(maxRel(r.alpha, ref.alpha, 'holdout alpha2')).toBeLessThan(TOL);
    expect(maxRel(r.holdoutMean, ref.holdoutMean, 'holdout m2')).toBeLessThan(TOL);
    expect(maxRel(r.meanAbsAlpha, ref.meanAbsAlpha, 'mean |alpha2|')).toBeLessThan(TOL);
    expect(maxRel(r.r2oos, ref.r2oos, 'R2oos')).toBeLessThan(TOL);
    expect([r.T1, r.T2, r.split]).toEqual([c.split, c.T - c.split, c.split]);
    r.alpha.forEach((a, i) => expect(a).toBeCloseTo(r.holdoutMean[i] - r.predicted[i], 15));
    expect(r.note === null).toBe(c.options.form === 'centred');
  });
});

describe('identity: pricing the estimation sample itself', () => {
  for (const [stage, form] of [['second', 'centred'], ['first', 'centred'], ['iterated', 'uncentred']] as const)
    it(`${stage} stage, ${form}: R²_oos = 1 − ê'ê / m'm of the in-sample fit (the ledger's pricing errors)`, () => {
      const e = simulateEconomy({ T: 300, N: 8, K: 2, seed: 41, alphaScale: 0.003 });
      const options = { stage, weighting: 'identity', lags: 2, form, factorMeansKnown: false } as const;
      const m = prepareMoments(e.returns, e.factors);
      const r = holdoutFromMoments(m, m, options);
      if (!r.ok) throw new Error(r.message);
      const led = estimateLedger({
        assetNames: e.returns[0].map((_, i) => `P${i + 1}`), returns: e.returns, factorNames: ['F1', 'F2'], factors: e.factors, traded: [true, true],
        options: { ...options, level: 0.05 },
      });
      const sse = led.pricingErrors.reduce((s, p) => s + p.alpha * p.alpha, 0);
      const sst = led.pricingErrors.reduce((s, p) => s + p.meanReturn * p.meanReturn, 0);
      expect(r.r2oos).toBeCloseTo(1 - sse / sst, 13);
      expect(r.r2in).toBeCloseTo(r.r2oos, 13);
      r.alpha.forEach((a, i) => expect(a).toBeCloseTo(led.pricingErrors[i].alpha, 14));
    });
});

describe('refused splits and windows', () => {
  const e = simulateEconomy({ T: 120, N: 5, K: 2, seed: 9 });
  const base = { returns: e.returns, factors: e.factors, factorNames: ['F1', 'F2'], options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false } as const };
  it('the split at the last period (and past it) is refused: nothing left to price', () => {
    for (const index of [119, 120, 0]) {
      let err: unknown;
      try {
        holdoutPricing({ ...base, split: { index } });
      } catch (x) {
        err = x;
      }
      expect(err).toBeInstanceOf(GmmInputError);
      expect((err as Error).message).toMatch(/both sides of the split/);
    }
  });
  it('fewer than N + K + 1 = 8 periods on either side is refused naming the allowed range; 8 on each side works', () => {
    expect(() => holdoutPricing({ ...base, split: { index: 7 } })).toThrow(/at least N \+ K \+ 1 = 8/);
    expect(() => holdoutPricing({ ...base, split: { index: 113 } })).toThrow(/between period 8 and 112/);
    expect(holdoutPricing({ ...base, options: { ...base.options, lags: 1 }, split: { index: 112 } }).ok).toBe(true);
    expect(() => holdoutPricing({ ...base, split: { fraction: 1 } })).toThrow(/strictly between 0 and 1/);
    expect(() => holdoutPricing({ ...base, split: { index: 50.5 } })).toThrow(/whole number/);
  });
  it('a fraction rounds down: 0.7 of T = 120 gives T₁ = 84', () => {
    const r = holdoutPricing({ ...base, split: { fraction: 0.7 }, dates: e.returns.map((_, t) => `p${t + 1}`) });
    if (!r.ok) throw new Error(r.message);
    expect([r.T1, r.T2, r.splitDate]).toEqual([84, 36, 'p85']);
  });
  it('rolling: a window shorter than N + K + 1 and a block of 1 period are refused', () => {
    expect(() => rollingHoldout({ ...base, window: { length: 7, step: 12 } })).toThrow(/at least 8/);
    expect(() => rollingHoldout({ ...base, window: { length: 60, step: 1 } })).toThrow(/at least 2 periods/);
  });
});

describe('rolling hold-out', () => {
  const e = simulateEconomy({ T: 300, N: 6, K: 2, seed: 12, alphaScale: 0.002 });
  const base = { returns: e.returns, factors: e.factors, factorNames: ['F1', 'F2'], options: { stage: 'second', weighting: 'identity', lags: 2, form: 'centred', factorMeansKnown: false } as const };
  it('one row per block; each row equals a single split on the window and the block; the last block is shorter', () => {
    const r = rollingHoldout({ ...base, window: { length: 120, step: 50 } });
    expect(r.rows.map((x) => [x.start, x.end, x.blockEnd])).toEqual([
      [0, 120, 170],
      [50, 170, 220],
      [100, 220, 270],
      [150, 270, 300],
    ]);
    for (const row of r.rows) {
      const single = holdoutPricing({ ...base, returns: e.returns.slice(row.start, row.blockEnd), factors: e.factors.slice(row.start, row.blockEnd), split: { index: row.end - row.start } });
      if (!single.ok) throw new Error(single.message);
      expect(row.r2oos).toBeCloseTo(single.r2oos, 13);
      expect(row.alpha).toEqual(single.alpha);
    }
    // pooled R²_oos = 1 − Σ α'α / Σ m'm
    let sse = 0;
    let sst = 0;
    for (const row of r.rows) {
      const m2 = holdoutPricing({ ...base, returns: e.returns.slice(row.start, row.blockEnd), factors: e.factors.slice(row.start, row.blockEnd), split: { index: row.end - row.start } });
      if (!m2.ok) throw new Error('');
      sse += m2.sse;
      sst += m2.sst;
    }
    expect(r.pooledR2oos).toBeCloseTo(1 - sse / sst, 13);
  });
  it('a block that cannot be priced is a row in the library failure shape (code + message), left out of the pooled R²_oos', () => {
    // zero returns in the last block [270, 300): every hold-out mean is zero, R²_oos is undefined
    const returns = e.returns.map((row, t) => (t >= 270 ? row.map(() => 0) : row));
    const r = rollingHoldout({ ...base, returns, window: { length: 120, step: 50 } });
    expect(r.rows).toHaveLength(4);
    const last = r.rows[3];
    if (last.ok) throw new Error('the last block should fail');
    expect(last.code).toBe('not-defined');
    expect(last.message).toMatch(/R²_oos is undefined/);
    expect(Object.keys(last)).not.toContain('reason');
    expect(gmmFailureMessage(last)).toBe('The statistic is not defined for these data: Every hold-out mean return is zero: R²_oos is undefined.');
    expect([last.b, last.alpha, last.r2oos, last.meanAbsAlpha]).toEqual([[], [], null, null]);
    // pooled over the three priced blocks only (identity: 1 − Σ α'α / Σ m'm of the single splits)
    let sse = 0;
    let sst = 0;
    for (const row of r.rows.slice(0, 3)) {
      expect(row.ok).toBe(true);
      const m2 = holdoutPricing({ ...base, returns: returns.slice(row.start, row.blockEnd), factors: e.factors.slice(row.start, row.blockEnd), split: { index: row.end - row.start } });
      if (!m2.ok) throw new Error(m2.message);
      sse += m2.sse;
      sst += m2.sst;
    }
    expect(r.pooledR2oos).toBeCloseTo(1 - sse / sst, 13);
  });
  it('expanding windows start at period 0', () => {
    const r = rollingHoldout({ ...base, window: { kind: 'expanding', length: 120, step: 90 } });
    expect(r.rows.map((x) => [x.start, x.end, x.blockEnd])).toEqual([
      [0, 120, 210],
      [0, 210, 300],
    ]);
  });
});

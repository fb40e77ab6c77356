/**
 * Rolling and expanding windows (lib/gmm/rolling.ts).
 * Checks: the window grid (TSDoc example); identity — each window's b̂, se(b̂), λ̂, se(λ̂) equal
 * estimateLedger run on that slice of the data by itself; the band z at 5% is 1.960 (standard
 * normal table, e.g. Abramowitz and Stegun 1964, table 26.1); a seeded simulation with a known
 * break in the premium shows up in the windows; a window with a constant factor is flagged, not NaN.
 */
import { describe, expect, it } from 'vitest';
import { estimateLedger } from './helpers';
import { estimateWindows, rollingEstimates, rollingWindows, summariseRolling, type RollingInput } from '../../lib/gmm/rolling';
import { GmmInputError } from '../../lib/gmm/errors';
import { gmmFailureMessage } from '../../shared/gmm-messages';
import { normalSampler, simulateEconomy } from './helpers';

const opts = { stage: 'second', weighting: 'identity', lags: 2, form: 'centred', factorMeansKnown: false, level: 0.05 } as const;

describe('rolling windows', () => {
  it('builds the documented window grid', () => {
    expect(rollingWindows(10, { kind: 'rolling', length: 4, step: 3 })).toEqual([[0, 4], [3, 7], [6, 10]]);
    expect(rollingWindows(10, { kind: 'expanding', length: 4, step: 3 })).toEqual([[0, 4], [0, 7], [0, 10]]);
    expect(() => rollingWindows(10, { kind: 'rolling', length: 11, step: 1 })).toThrow(GmmInputError);
    expect(() => rollingWindows(10, { kind: 'rolling', length: 4, step: 0 })).toThrow(/step/);
  });

  const e = simulateEconomy({ T: 240, N: 6, K: 2, seed: 5 });
  const input: RollingInput = {
    returns: e.returns,
    factors: e.factors,
    factorNames: ['F1', 'F2'],
    dates: e.returns.map((_, t) => `p${t}`),
    window: { kind: 'rolling', length: 120, step: 40 },
    options: opts,
  };

  it('each window equals the ledger estimated on that slice alone (identity)', () => {
    const r = rollingEstimates(input);
    expect(r.points.map((p) => [p.start, p.end])).toEqual([[0, 120], [40, 160], [80, 200], [120, 240]]);
    expect(r.z).toBeCloseTo(1.959964, 5);
    for (const p of r.points) {
      expect(p.ok).toBe(true);
      const L = estimateLedger({
        assetNames: e.returns[0].map((_, i) => `P${i}`),
        returns: e.returns.slice(p.start, p.end),
        factorNames: ['F1', 'F2'],
        factors: e.factors.slice(p.start, p.end),
        traded: [true, true],
        options: opts,
      });
      L.factors.forEach((f, k) => {
        expect(p.b[k] / f.b).toBeCloseTo(1, 10);
        expect(p.seB[k] / f.seB).toBeCloseTo(1, 10);
        expect(p.lambda[k] / f.lambda).toBeCloseTo(1, 10);
        expect(p.seLambda[k] / f.seLambda).toBeCloseTo(1, 10);
        expect(p.tB[k]).toBeCloseTo(f.tB, 9);
      });
      expect(p.J).toBeCloseTo(L.J.stat, 9);
      expect(p.endDate).toBe(`p${p.end - 1}`);
    }
    // chunked = one pass
    expect(summariseRolling(input, [...estimateWindows(input, 2, 4), ...estimateWindows(input, 0, 2)])).toEqual(r);
  });

  it('expanding windows end at the last period', () => {
    const r = rollingEstimates({ ...input, window: { kind: 'expanding', length: 100, step: 70 } });
    expect(r.points.map((p) => [p.start, p.end])).toEqual([[0, 100], [0, 170], [0, 240]]);
  });

  it('tracks a known break in the premium (seeded simulation)', () => {
    // Invented: λ = 0.012 in the first half, 0 in the second; one factor, ten assets.
    const z = normalSampler(9);
    const T = 800;
    const betas = Array.from({ length: 10 }, (_, i) => 0.4 + 0.15 * i);
    const factors: number[][] = [];
    const returns: number[][] = [];
    for (let t = 0; t < T; t++) {
      const lam = t < T / 2 ? 0.012 : 0;
      const f = lam + 0.04 * z();
      factors.push([f]);
      returns.push(betas.map((b) => b * f + 0.01 * z()));
    }
    const r = rollingEstimates({ returns, factors, factorNames: ['M'], window: { kind: 'rolling', length: 400, step: 400 }, options: { ...opts, lags: 0 } });
    expect(r.points).toHaveLength(2);
    expect(r.points[0].tLambda[0]).toBeGreaterThan(2.5);
    expect(Math.abs(r.points[1].tLambda[0])).toBeLessThan(2.5);
    expect(r.points[0].lambda[0]).toBeGreaterThan(r.points[1].lambda[0]);
  });

  it('flags a window where a factor is constant instead of returning NaN', () => {
    const f = e.factors.map((row, t) => (t < 120 ? [row[0], 0.01] : row));
    const r = rollingEstimates({ ...input, factors: f, window: { kind: 'rolling', length: 60, step: 60 } });
    const p0 = r.points[0];
    if (p0.ok) throw new Error('window 0 should fail');
    // the library's one failure shape (lib/gmm/errors.ts): a code and the detail
    expect(p0.code).toBe('singular');
    expect(p0.message).toMatch(/constant/);
    expect(Object.keys(p0)).not.toContain('reason');
    expect(gmmFailureMessage(p0)).toBe(`The estimation could not be solved: factor 'F2' is constant in this window`);
    expect(r.failed).toBe(2);
    expect(JSON.stringify(r)).not.toMatch(/NaN|Infinity/);
    for (const p of r.points) expect(p.b.every(Number.isFinite)).toBe(true);
    expect(r.points[3].ok).toBe(true);
  });
});

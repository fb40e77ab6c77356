/**
 * The subset sweep's squared-Sharpe ranking and adjusted p (lib/gmm/subset-sweep.ts). Checks:
 * every subset's θ̂ (one Cholesky row per subset) equals squaredSharpe on that subset alone (a
 * full solve, itself checked against numpy in sharpe.test.ts), in one pass and in chunks starting
 * anywhere; subsets with a non-traded candidate are not ranked; the within-one-SE marks follow
 * their definition; the adjusted p per candidate equal Holm / BY of the full model's b tests as the
 * ledger computes them (same stage and weighting).
 */
import { describe, expect, it } from 'vitest';
import { benjaminiYekutieliAdjust, evaluateSubsets, holmAdjust, prepareSubsetSweep, squaredSharpe, subsetFactors, subsetSweep, summariseSubsetSweep, sweepChunk, type SubsetSweepInput } from '../../lib/gmm/index';
import { estimateLedger, simulateEconomy, okOf } from './helpers';

const names = ['A', 'B', 'C', 'D', 'E', 'F'];
const e = simulateEconomy({ T: 400, N: 12, K: 6, seed: 31, mu: [0.005, 0.004, 0.003, 0.002, 0.004, 0.001] });
const traded = [true, true, false, true, true, true];
const input: SubsetSweepInput = {
  returns: e.returns,
  factors: e.factors,
  factorNames: names,
  traded,
  options: { lags: 3, form: 'centred', factorMeansKnown: false, weighting: 'identity', thetaTop: 8 },
};
const plan = okOf(prepareSubsetSweep(input)).plan;
const rows = evaluateSubsets(plan, 1, 64);

describe('sweep θ̂ per subset', () => {
  it('equals squaredSharpe on the subset alone (1e-12 relative); null with the non-traded candidate C', () => {
    for (const r of rows) {
      const sub = subsetFactors(r.mask, names);
      if (sub.includes('C')) {
        expect(r.theta).toBeNull();
        continue;
      }
      const one = squaredSharpe({ factors: e.factors, factorNames: names, traded, lags: 3, model: sub });
      if (!('theta' in one)) throw new Error('singular');
      expect(Math.abs(r.theta! - one.theta) / one.theta).toBeLessThan(1e-12);
    }
  });
  it('chunks starting anywhere give the same θ̂ as one pass', () => {
    const chunked = [...evaluateSubsets(plan, 1, 23), ...evaluateSubsets(plan, 23, 41), ...evaluateSubsets(plan, 41, 64)];
    expect(chunked.map((r) => r.theta)).toEqual(rows.map((r) => r.theta));
  });
  it('without traded flags, or with thetaRanking false, no θ̂ and a note', () => {
    const { traded: _t, ...noFlags } = input;
    const r = okOf(subsetSweep(noFlags)).sweep;
    expect(r.thetaRanking).toBeNull();
    expect(r.thetaNote).toMatch(/traded flags/);
    const off = okOf(subsetSweep({ ...input, options: { ...input.options, thetaRanking: false } })).sweep;
    expect(off.thetaRanking).toBeNull();
    expect(evaluateSubsets(okOf(prepareSubsetSweep(noFlags)).plan, 1, 64).every((row) => row.theta === null)).toBe(true);
  });
});

describe('sweep θ̂ ranking', () => {
  const res = summariseSubsetSweep(plan, sweepChunk(plan, 1, 64));
  const rk = res.thetaRanking!;
  it('ranks the 31 subsets of the five traded candidates; the best is all of them (θ̂ never falls when a factor is added)', () => {
    expect(rk.candidates).toEqual(['A', 'B', 'D', 'E', 'F']);
    expect(rk.models).toBe(31);
    expect(rk.best.factors).toEqual(['A', 'B', 'D', 'E', 'F']);
    expect(rk.top).toHaveLength(8);
    for (let i = 1; i < rk.top.length; i++) expect(rk.top[i].theta).toBeLessThanOrEqual(rk.top[i - 1].theta);
  });
  it('within one SE: θ̂ ≥ θ̂_best − se(θ̂_best), counted over all ranked subsets; SEs equal squaredSharpe’s', () => {
    const cut = rk.best.theta - rk.best.se;
    const thetas = rows.filter((r) => r.theta !== null).map((r) => r.theta!);
    expect(rk.withinOneSe).toBe(thetas.filter((t) => t >= cut).length);
    for (const m of [...rk.top, ...rk.bestBySize, ...rk.smallestWithinOneSe]) {
      expect(m.withinOneSe).toBe(m.theta >= cut);
      const one = squaredSharpe({ factors: e.factors, factorNames: names, traded, lags: 3, model: m.factors });
      if (!('se' in one)) throw new Error('singular');
      expect(m.se).toBeCloseTo(one.se, 14);
    }
    const minSize = Math.min(...rows.filter((r) => r.theta !== null && r.theta >= cut).map((r) => r.size));
    expect(rk.smallestWithinOneSe.every((m) => m.size === minSize && m.withinOneSe)).toBe(true);
    expect(rk.bestBySize.map((m) => m.size)).toEqual([1, 2, 3, 4, 5]);
  });
});

describe('sweep adjusted p per candidate', () => {
  it('Holm and BY of the full model’s b tests, equal to the ledger’s (second stage, identity first stage)', () => {
    const res = okOf(subsetSweep(input)).sweep;
    const led = estimateLedger({
      assetNames: e.returns[0].map((_, i) => `P${i + 1}`),
      returns: e.returns,
      factorNames: names,
      factors: e.factors,
      traded,
      options: { stage: 'second', weighting: 'identity', lags: 3, form: 'centred', factorMeansKnown: false, level: 0.05 },
    });
    res.candidates.forEach((c, k) => {
      expect(c.name).toBe(names[k]);
      expect(c.traded).toBe(traded[k]);
      expect(c.b).toBeCloseTo(led.factors[k].b, 12);
      expect(c.pB).toBeCloseTo(led.factors[k].pB, 12);
      expect(c.pHolm).toBeCloseTo(led.factors[k].pHolm, 12);
      expect(c.pBY).toBeCloseTo(led.factors[k].pBY, 12);
    });
    expect(res.candidates.map((c) => c.pHolm)).toEqual(holmAdjust(res.candidates.map((c) => c.pB)));
    expect(res.candidates.map((c) => c.pBY)).toEqual(benjaminiYekutieliAdjust(res.candidates.map((c) => c.pB)));
  });
});

/**
 * Subset sweep (lib/gmm/subset-sweep.ts).
 * Checks: (1) identity against brute force — every subset's HJ distance equals the ledger's HJ on
 * that subset alone, and its drop statistic equals the ledger's joint drop test of the complement
 * in the full model (same formulas computed the long way by estimateLedger); (2) a seeded
 * simulation with known truth where two of six candidates price the assets and the other four are
 * noise: the true pair ranks first among two-factor models and is the smallest model the drop test
 * does not reject; (3) input errors.
 */
import { describe, expect, it } from 'vitest';
import { estimateLedger, okOf } from './helpers';
import { evaluateSubsets, mergeSweepPartials, prepareSubsetSweep, subsetFactors, subsetSweep, summariseSubsetSweep, sweepChunk, type SubsetSweepInput } from '../../lib/gmm/subset-sweep';
import { Matrix, solve } from 'ml-matrix';
import { GmmInputError } from '../../lib/gmm/errors';
import { chiSquareSf } from '../../lib/gmm/distributions';
import { normalSampler, simulateEconomy } from './helpers';

const names = ['A', 'B', 'C', 'D'];

describe('subset sweep against brute force (identity)', () => {
  const e = simulateEconomy({ T: 300, N: 10, K: 4, seed: 21 });
  const input: SubsetSweepInput = {
    returns: e.returns,
    factors: e.factors,
    factorNames: names,
    options: { lags: 3, form: 'centred', factorMeansKnown: false, weighting: 'identity' },
  };
  const plan = okOf(prepareSubsetSweep(input)).plan;
  const rows = evaluateSubsets(plan, 1, 16);

  it('evaluates all 15 subsets', () => {
    expect(rows.map((r) => r.mask)).toEqual(Array.from({ length: 15 }, (_, i) => i + 1));
    expect(subsetFactors(5, ['A', 'B', 'C'])).toEqual(['A', 'C']); // TSDoc example
  });

  for (const mask of [1, 6, 11, 15]) {
    it(`mask ${mask}: HJ equals the ledger on the subset; D equals the ledger's joint drop of the complement`, () => {
      const row = rows.find((r) => r.mask === mask)!;
      const sub = subsetFactors(mask, names);
      const idx = sub.map((n) => names.indexOf(n));
      const ledgerSub = estimateLedger({
        assetNames: e.returns[0].map((_, i) => `P${i + 1}`),
        returns: e.returns,
        factorNames: sub,
        factors: e.factors.map((f) => idx.map((k) => f[k])),
        traded: sub.map(() => true),
        options: { stage: 'first', weighting: 'second-moment', lags: 3, form: 'centred', factorMeansKnown: false, level: 0.05 },
      });
      expect(row.hj).toBeCloseTo(ledgerSub.hj!, 12);
      const complement = names.filter((n) => !sub.includes(n));
      if (complement.length === 0) {
        expect(row.drop).toBe(0);
        expect(row.p).toBe(1);
        return;
      }
      const full = estimateLedger({
        assetNames: e.returns[0].map((_, i) => `P${i + 1}`),
        returns: e.returns,
        factorNames: names,
        factors: e.factors,
        traded: names.map(() => true),
        options: { stage: 'second', weighting: 'identity', lags: 3, form: 'centred', factorMeansKnown: false, level: 0.05, dropSet: complement },
      });
      const d = full.jointDrop!.chi2Drop!;
      expect(row.drop! / d.stat).toBeCloseTo(1, 9);
      expect(row.df).toBe(d.df);
      expect(row.p).toBeCloseTo(d.p, 9);
    });
  }

  it('with stage iterated, D equals the iterated ledger\'s joint drop test (same W*: the last iterate)', () => {
    const iter = okOf(prepareSubsetSweep({ ...input, options: { ...input.options, stage: 'iterated' } })).plan;
    const [row] = evaluateSubsets(iter, 6, 7); // mask 6 = factors 2 and 3; complement: factors 1 and 4
    const sub = subsetFactors(6, names);
    const complement = names.filter((n) => !sub.includes(n));
    const full = estimateLedger({
      assetNames: e.returns[0].map((_, i) => `P${i + 1}`),
      returns: e.returns,
      factorNames: names,
      factors: e.factors,
      traded: names.map(() => true),
      options: { stage: 'iterated', weighting: 'identity', lags: 3, form: 'centred', factorMeansKnown: false, level: 0.05, dropSet: complement },
    });
    const d = full.jointDrop!.chi2Drop!;
    expect(row.drop! / d.stat).toBeCloseTo(1, 9);
    // and it is not the two-step W*: the two statistics differ on these data
    const twoStep = rows.find((r) => r.mask === 6)!;
    expect(Math.abs(twoStep.drop! - row.drop!)).toBeGreaterThan(1e-6);
  });

  it('chunked evaluation summarises to the same result as one pass', () => {
    const one = okOf(subsetSweep(input)).sweep;
    const chunked = summariseSubsetSweep(plan, mergeSweepPartials(plan, [sweepChunk(plan, 9, 16), sweepChunk(plan, 1, 9)]));
    expect(chunked).toEqual(one);
    expect(one.models).toBe(15);
    // HJ weakly falls as factors are added (nested models, same weighting): best of size 4 ≤ best of size 1
    expect(one.bestByHj[3].models[0].hj).toBeLessThanOrEqual(one.bestByHj[0].models[0].hj);
  });
});

describe('each subset\'s objective by one Cholesky row per mask (identity)', () => {
  // The sweep keeps the Cholesky factor of A_ss across consecutive masks (QuadFormStack). Check:
  // every one of the 1,023 subsets of 10 candidates against a fresh solve of that subset alone by
  // ml-matrix (an LU solve, a different algorithm and order): Q(s) = q0 − c_s' A_ss^{-1} c_s.
  const e = simulateEconomy({ T: 400, N: 14, K: 10, seed: 33 });
  const cand = e.factors[0].map((_, k) => `F${k + 1}`);
  const plan = okOf(prepareSubsetSweep({ returns: e.returns, factors: e.factors, factorNames: cand, options: { lags: 2, form: 'centred', factorMeansKnown: false, weighting: 'identity' } })).plan;
  const K = plan.K;
  const quad = (A: Float64Array, c: Float64Array, mask: number): number => {
    const idx = Array.from({ length: K }, (_, k) => k).filter((k) => (mask >> k) & 1);
    const As = new Matrix(idx.map((a) => idx.map((b) => A[a * K + b])));
    const cs = Matrix.columnVector(idx.map((a) => c[a]));
    const x = solve(As, cs);
    return idx.reduce((s, a, i) => s + c[a] * x.get(i, 0), 0);
  };
  const rows = evaluateSubsets(plan, 1, 2 ** K);
  it('HJ(s) and D(s) agree with the direct solve to 1e-10 (relative) on all 1,023 subsets', () => {
    expect(rows).toHaveLength(1023);
    let worst = 0;
    for (const r of rows) {
      const hj = Math.sqrt(Math.max(0, plan.hjQ0 - quad(plan.hjA, plan.hjC, r.mask)));
      const q = plan.wQ0 - quad(plan.wA, plan.wC, r.mask);
      const d = r.size === K ? 0 : Math.max(0, plan.T * (q - plan.wQFull));
      worst = Math.max(worst, Math.abs(r.hj! - hj) / hj);
      // D is a difference of two objectives: compare on the scale of T·Q(s)
      worst = Math.max(worst, Math.abs(r.drop! - d) / (plan.T * q));
      expect(r.p).toBe(chiSquareSf(r.drop!, r.df));
    }
    expect(worst).toBeLessThan(1e-10);
  });
  it('a subset is the same whichever mask came before it (a chunk starting at the mask)', () => {
    for (const mask of [1, 2, 3, 512, 513, 700, 1023]) {
      const [alone] = evaluateSubsets(plan, mask, mask + 1);
      expect(alone).toEqual(rows[mask - 1]);
    }
  });
});

describe('subset sweep with known truth', () => {
  it('ranks the two pricing factors first among two-factor models and as the smallest adequate model', () => {
    // Invented economy: factors 1 and 4 (B, E) carry premia and move returns; A, C, D, F are noise
    // series unrelated to returns. E[R] = β λ exactly (no pricing error).
    const T = 600;
    const N = 12;
    const z = normalSampler(77);
    const lam = [0.01, 0.008];
    const sd = [0.04, 0.03];
    const betas = Array.from({ length: N }, (_, i) => [0.3 + (1.4 * i) / N, 1.6 - (1.3 * ((i * 5) % N)) / N]);
    const factors: number[][] = [];
    const returns: number[][] = [];
    for (let t = 0; t < T; t++) {
      const f = [lam[0] + sd[0] * z(), lam[1] + sd[1] * z()];
      const noise = [0.03 * z(), 0.03 * z(), 0.03 * z(), 0.03 * z()];
      factors.push([noise[0], f[0], noise[1], noise[2], f[1], noise[3]]);
      returns.push(betas.map((b) => b[0] * f[0] + b[1] * f[1] + 0.01 * z()));
    }
    const cand = ['A', 'B', 'C', 'D', 'E', 'F'];
    const r = okOf(subsetSweep({ returns, factors, factorNames: cand, options: { lags: 0, form: 'centred', factorMeansKnown: false, weighting: 'identity' } })).sweep;
    expect(r.models).toBe(63);
    expect(r.bestByHj[1].models[0].factors).toEqual(['B', 'E']);
    expect(r.bestByDrop[1].models[0].factors).toEqual(['B', 'E']);
    expect(r.adequate[0].factors).toEqual(['B', 'E']);
    // every one-factor model is rejected against the full model
    for (const m of r.bestByDrop[0].models) expect(m.p).toBeLessThan(0.05);
    // B and E appear most often among the listed best models
    const freq = [...r.factorFrequency].sort((a, b) => b.share - a.share);
    expect(new Set(freq.slice(0, 2).map((f) => f.name))).toEqual(new Set(['B', 'E']));
  });
});

describe('subset sweep input errors', () => {
  it('refuses more than 25 candidates with a named error', () => {
    const e = simulateEconomy({ T: 200, N: 30, K: 26, seed: 2 });
    expect(() =>
      okOf(subsetSweep({ returns: e.returns, factors: e.factors, factorNames: e.factors[0].map((_, k) => `F${k}`), options: { lags: 0, form: 'centred', factorMeansKnown: false, weighting: 'identity' } })).sweep,
    ).toThrow(GmmInputError);
    expect(() =>
      subsetSweep({ returns: e.returns, factors: e.factors, factorNames: e.factors[0].map((_, k) => `F${k}`), options: { lags: 0, form: 'centred', factorMeansKnown: false, weighting: 'identity' } }),
    ).toThrow(/at most 25 candidate factors; got 26/);
  });
});

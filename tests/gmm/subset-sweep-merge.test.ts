/**
 * The subset sweep's chunk merge (lib/gmm/subset-sweep.ts: sweepChunk, mergeSweepPartials,
 * sweepWithinOneSe, mergeWithinPartials). Checks:
 * (1) identity — for random chunkings of the masks, merged in random order, the summary is bit
 *     for bit (JSON text and Object.is on every number) the one-chunk summary;
 * (2) definition — the summary's lists equal the definition applied to every row (all rows sorted
 *     by the stated orders, the one-SE count over all rows), computed the long way from
 *     evaluateSubsets;
 * (3) the within-one-SE counts made in the first pass equal the second pass, and a plan whose
 *     guess of the best is wrong falls back to the second pass;
 * (4) more than 15 candidates (16: 65,535 models) run in lib/gmm and merge exactly;
 * (5) caller mistakes: overlapping or missing chunks throw GmmInputError.
 */
import { describe, expect, it } from 'vitest';
import {
  evaluateSubsets,
  mergeSweepPartials,
  mergeWithinPartials,
  prepareSubsetSweep,
  summariseSubsetSweep,
  sweepChunk,
  sweepWithinOneSe,
  thetaCut,
  type SubsetSweepInput,
  type SweepPartial,
  type SweepPlan,
} from '../../lib/gmm/subset-sweep';
import { GmmInputError } from '../../lib/gmm/errors';
import { normalSampler, okOf, simulateEconomy } from './helpers';

function sweepInput(K: number, seed: number, tradedBits: number, extra: Partial<SubsetSweepInput['options']> = {}, N = 12): SubsetSweepInput {
  const e = simulateEconomy({ T: 240, N, K, seed });
  const names = Array.from({ length: K }, (_, k) => `F${k + 1}`);
  return {
    returns: e.returns,
    factors: e.factors,
    factorNames: names,
    traded: names.map((_, k) => ((tradedBits >> k) & 1) === 1),
    options: { lags: 2, form: 'centred', factorMeansKnown: false, weighting: 'identity', topPerSize: 4, thetaTop: 6, level: 0.1, ...extra },
  };
}

/** Random cut points in [1, 2^K), and a random order of the chunks (seeded). */
function randomChunks(K: number, seed: number, cuts: number): [number, number][] {
  const u = normalSampler(seed);
  const hi = 2 ** K;
  const points = new Set<number>();
  while (points.size < cuts) points.add(1 + Math.floor(Math.abs(u() * 1e6)) % (hi - 1));
  const edges = [1, ...[...points].sort((a, b) => a - b), hi].filter((v, i, a) => i === 0 || v > a[i - 1]);
  const ranges = edges.slice(1).map((b, i) => [edges[i], b] as [number, number]);
  // shuffle (Fisher–Yates with the seeded draws)
  for (let i = ranges.length - 1; i > 0; i--) {
    const j = Math.floor(Math.abs(u() * 1e6)) % (i + 1);
    [ranges[i], ranges[j]] = [ranges[j], ranges[i]];
  }
  return ranges;
}

/** Every number of two JSON-able values equal by Object.is (−0 and NaN included), same shapes. */
function sameBits(a: unknown, b: unknown, path = '$'): void {
  if (typeof a === 'number' && typeof b === 'number') {
    if (!Object.is(a, b)) throw new Error(`${path}: ${a} ≠ ${b}`);
    return;
  }
  if (Array.isArray(a) && Array.isArray(b)) {
    expect(a.length, path).toBe(b.length);
    a.forEach((v, i) => sameBits(v, b[i], `${path}[${i}]`));
    return;
  }
  if (a && b && typeof a === 'object' && typeof b === 'object') {
    expect(Object.keys(a).sort(), path).toEqual(Object.keys(b).sort());
    for (const k of Object.keys(a)) sameBits((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], `${path}.${k}`);
    return;
  }
  expect(a, path).toBe(b);
}

function chunkedSummary(plan: SweepPlan, ranges: readonly [number, number][]) {
  const whole = mergeSweepPartials(plan, ranges.map(([a, b]) => sweepChunk(plan, a, b)));
  const cut = thetaCut(plan, whole);
  const within = cut === null ? undefined : mergeWithinPartials(plan, [...ranges].reverse().map(([a, b]) => sweepWithinOneSe(plan, cut, a, b)));
  return summariseSubsetSweep(plan, whole, within);
}

describe('sweep chunks merge exactly (identity: merged = one pass)', () => {
  const cases: [number, number, number][] = [
    [6, 11, 0b111011],
    [8, 12, 0xff],
    [9, 13, 0b101101101],
    [7, 14, 0],
  ];
  for (const [K, seed, bits] of cases) {
    it(`K = ${K}, traded ${bits.toString(2).padStart(K, '0')}: five random chunkings, merged in random order, equal the single pass bit for bit`, () => {
      const plan = okOf(prepareSubsetSweep(sweepInput(K, seed, bits))).plan;
      const one = summariseSubsetSweep(plan, sweepChunk(plan, 1, 2 ** K));
      for (let c = 0; c < 5; c++) {
        const ranges = randomChunks(K, seed * 100 + c, 1 + ((c * 7) % 40));
        const merged = chunkedSummary(plan, ranges);
        expect(JSON.stringify(merged)).toBe(JSON.stringify(one));
        sameBits(merged, one);
      }
      // merging is associative: a merge of merges equals the flat merge
      const ranges = randomChunks(K, seed, 9);
      const parts = ranges.map(([a, b]) => sweepChunk(plan, a, b));
      const nested = mergeSweepPartials(plan, [mergeSweepPartials(plan, parts.slice(0, 4)), mergeSweepPartials(plan, parts.slice(4))]);
      sameBits(nested, mergeSweepPartials(plan, parts));
      sameBits(nested, sweepChunk(plan, 1, 2 ** K));
    });
  }
});

describe('the partial holds what the definition gives on all rows', () => {
  it('top lists, adequate models and one-SE figures equal the sorted rows (K = 8)', () => {
    const K = 8;
    const plan = okOf(prepareSubsetSweep(sweepInput(K, 12, 0b11110111))).plan;
    const rows = evaluateSubsets(plan, 1, 2 ** K);
    const res = summariseSubsetSweep(plan, mergeSweepPartials(plan, randomChunks(K, 5, 13).map(([a, b]) => sweepChunk(plan, a, b))));
    const ok = rows.filter((r) => r.hj !== null);
    expect(res.models).toBe(255);
    expect(res.singular).toBe(rows.length - ok.length);
    for (let size = 1; size <= K; size++) {
      const same = ok.filter((r) => r.size === size);
      const byHj = [...same].sort((a, b) => a.hj! - b.hj! || a.mask - b.mask).slice(0, 4);
      const byDrop = [...same].sort((a, b) => a.drop! - b.drop! || a.mask - b.mask).slice(0, 4);
      expect(res.bestByHj[size - 1].models.map((m) => m.hj)).toEqual(byHj.map((r) => r.hj));
      expect(res.bestByDrop[size - 1].models.map((m) => m.drop)).toEqual(byDrop.map((r) => r.drop));
    }
    const adequate = ok.filter((r) => r.p! > 0.1).sort((a, b) => a.size - b.size || a.hj! - b.hj! || a.mask - b.mask).slice(0, 10);
    expect(res.adequate.map((m) => m.hj)).toEqual(adequate.map((r) => r.hj));
    const rk = res.thetaRanking!;
    const ranked = rows.filter((r) => r.theta !== null);
    expect(rk.models).toBe(ranked.length);
    const bestTheta = Math.max(...ranked.map((r) => r.theta!));
    expect(rk.best.theta).toBe(bestTheta);
    const cut = rk.best.theta - rk.best.se;
    const within = ranked.filter((r) => r.theta! >= cut);
    expect(rk.withinOneSe).toBe(within.length);
    const minSize = Math.min(...within.map((r) => r.size));
    const smallest = within.filter((r) => r.size === minSize).sort((a, b) => b.theta! - a.theta! || a.mask - b.mask).slice(0, 10);
    expect(rk.smallestWithinOneSe.map((m) => m.theta)).toEqual(smallest.map((r) => r.theta));
  });
});

describe('the within-one-SE count of the first pass', () => {
  // The plan expects the best θ̂ to be the set of all traded candidates and every chunk counts the
  // subsets within that subset's one-SE cut; the summary uses those counts only when the sweep's
  // best is that subset. Checks: the guess holds on these economies and the counts equal a second
  // pass with the true cut (the definition); with the guess made wrong by hand, the summary falls
  // back to the second pass and still gives the definition's figures.
  for (const [K, seed, bits] of [[8, 12, 0b11110111], [9, 13, 0b101101101], [7, 3, 0b1111111]] as const) {
    it(`K = ${K}, traded ${bits.toString(2).padStart(K, '0')}: first-pass counts = second pass; a wrong guess falls back`, () => {
      const plan = okOf(prepareSubsetSweep(sweepInput(K, seed, bits))).plan;
      const whole = mergeSweepPartials(plan, randomChunks(K, seed, 7).map(([a, b]) => sweepChunk(plan, a, b)));
      expect(plan.thetaGuess!.mask).toBe(bits);
      expect(whole.thetaTop[0].mask).toBe(bits);
      const cut = thetaCut(plan, whole)!;
      expect(plan.thetaGuess!.cut).toBe(cut);
      const second = sweepWithinOneSe(plan, cut, 1, 2 ** K);
      sameBits(whole.within, second);
      const byDefinition = summariseSubsetSweep(plan, whole, second);
      sameBits(summariseSubsetSweep(plan, whole), byDefinition);
      // a plan whose guess is another subset, with a cut that would count every subset
      const wrong: SweepPlan = { ...plan, thetaGuess: { mask: bits & (bits - 1), cut: -Infinity } };
      const wrongWhole = mergeSweepPartials(wrong, randomChunks(K, seed + 1, 5).map(([a, b]) => sweepChunk(wrong, a, b)));
      expect(wrongWhole.within!.count).toBe(wrongWhole.thetaCount);
      sameBits(summariseSubsetSweep(wrong, wrongWhole), byDefinition);
    });
  }
  it('a partial without within counts does not merge under a plan that expects them', () => {
    const plan = okOf(prepareSubsetSweep(sweepInput(6, 11, 0b111011))).plan;
    const part = { ...sweepChunk(plan, 1, 64), within: null };
    expect(() => mergeSweepPartials(plan, [part])).toThrow(GmmInputError);
  });
});

describe('more than 15 candidates', () => {
  it('16 candidates (65,535 models): 200 chunks merge to the single pass; memory is the bounded lists only', () => {
    const K = 16;
    const plan = okOf(prepareSubsetSweep(sweepInput(K, 17, 0xfff0, { thetaTop: 5 }, 20))).plan;
    const whole = sweepChunk(plan, 1, 2 ** K);
    const size = Math.ceil((2 ** K - 1) / 200);
    const ranges: [number, number][] = [];
    for (let a = 1; a < 2 ** K; a += size) ranges.push([a, Math.min(2 ** K, a + size)]);
    expect(ranges).toHaveLength(200);
    const merged = mergeSweepPartials(plan, ranges.reverse().map(([a, b]) => sweepChunk(plan, a, b)));
    sameBits(merged, whole);
    expect(whole.models).toBe(65_535);
    // bounded: per size at most topPerSize rows (4), plus at most 10 adequate and 5 by θ̂
    const kept = whole.bestByHj.flat().length + whole.bestByDrop.flat().length + whole.adequate.length + whole.thetaTop.length;
    expect(kept).toBeLessThanOrEqual(2 * 4 * K + 10 + 5);
    sameBits(chunkedSummary(plan, ranges), summariseSubsetSweep(plan, whole));
  });
});

describe('chunk mistakes', () => {
  const plan = okOf(prepareSubsetSweep(sweepInput(5, 3, 0b11111))).plan;
  it('overlapping chunks are refused', () => {
    expect(() => mergeSweepPartials(plan, [sweepChunk(plan, 1, 10), sweepChunk(plan, 9, 32)])).toThrow(GmmInputError);
  });
  it('a summary of chunks that miss masks is refused', () => {
    const part: SweepPartial = mergeSweepPartials(plan, [sweepChunk(plan, 1, 10), sweepChunk(plan, 11, 32)]);
    expect(() => summariseSubsetSweep(plan, part)).toThrow(/not all of \[1, 32\)/);
  });
  it('bad topPerSize and level are refused', () => {
    expect(() => prepareSubsetSweep(sweepInput(5, 3, 1, { topPerSize: 0 }))).toThrow(GmmInputError);
    expect(() => prepareSubsetSweep(sweepInput(5, 3, 1, { level: 1.5 }))).toThrow(GmmInputError);
  });
});

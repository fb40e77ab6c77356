/**
 * Squared Sharpe ratio comparison (lib/gmm/sharpe.ts; Barillas and Shanken 2017, Barillas, Kan,
 * Robotti and Shanken 2020): θ̂, se(θ̂) and the z test against numpy
 * (tests/reference/gmm_reference.py `sharpe_task`, one process for every case) on seeded
 * invented data, to 1e-8 relative; nested models get the joint spanning test (equal to
 * spanningTest, itself checked against numpy in reference.test.ts); a non-traded factor is refused.
 */
import { describe, expect, it } from 'vitest';
import { compareModels, GmmInputError, spanningTest, squaredSharpe, type CompareModelsInput } from '../../lib/gmm/index';
import { maxRel, runReference, simulateEconomy } from './helpers';

const TOL = 1e-8;
const names = ['MKT', 'CARRY', 'GROWTH', 'QUALITY', 'MOOD'];

interface Case {
  name: string;
  seed: number;
  T: number;
  lags: number;
  a: number[];
  b: number[];
}
const cases: Case[] = [
  { name: 'one shared factor, White (L = 0)', seed: 1, T: 600, lags: 0, a: [0, 1], b: [0, 2] },
  { name: 'one shared factor, L = 4', seed: 2, T: 480, lags: 4, a: [0, 1], b: [0, 2] },
  { name: 'no shared factor, L = 2', seed: 3, T: 500, lags: 2, a: [1, 3], b: [0, 2] },
  { name: 'two shared, sizes 3 and 4, L = 6', seed: 4, T: 720, lags: 6, a: [0, 1, 4], b: [0, 1, 2, 3] },
];
const data = cases.map((c) => simulateEconomy({ T: c.T, N: 2, K: 5, seed: c.seed, phi: 0.3 }).factors);
const refs = runReference('sharpe', cases.map((c, i) => ({ task: 'sharpe', factors: data[i], lags: c.lags, a: c.a, b: c.b })));

const input = (i: number, a: readonly string[], b: readonly string[], traded = names.map(() => true)): CompareModelsInput => ({
  factors: data[i],
  factorNames: names,
  traded,
  modelA: a,
  modelB: b,
  lags: cases[i].lags,
});

describe.each(cases.map((c, i) => ({ ...c, i })))('θ̂ and the z test against numpy: $name', (c) => {
  const ref = refs[c.i];
  const r = compareModels(input(c.i, c.a.map((k) => names[k]), c.b.map((k) => names[k])));
  it('θ̂_A, θ̂_B, their SEs, the difference, its SE, z and p agree to 1e-8', () => {
    if (!r.ok || r.kind !== 'sharpe') throw new Error(`expected the z test, got ${r.ok ? r.kind : r.code}`);
    expect(maxRel(r.a.theta, ref.a.theta, 'theta A')).toBeLessThan(TOL);
    expect(maxRel(r.b.theta, ref.b.theta, 'theta B')).toBeLessThan(TOL);
    expect(maxRel(r.a.se, ref.a.se, 'se theta A')).toBeLessThan(TOL);
    expect(maxRel(r.b.se, ref.b.se, 'se theta B')).toBeLessThan(TOL);
    expect(maxRel(r.diff, ref.diff, 'theta diff')).toBeLessThan(TOL);
    expect(maxRel(r.se, ref.se, 'se diff')).toBeLessThan(TOL);
    expect(maxRel(r.z, ref.z, 'z')).toBeLessThan(TOL);
    expect(maxRel(r.p, ref.p, 'p (scipy norm.sf)')).toBeLessThan(TOL);
    expect(r.shared).toEqual(c.a.filter((k) => c.b.includes(k)).map((k) => names[k]));
    expect(r.T).toBe(c.T);
  });
  it('squaredSharpe of one model equals the comparison’s side', () => {
    const one = squaredSharpe({ factors: data[c.i], factorNames: names, traded: names.map(() => true), lags: c.lags, model: c.a.map((k) => names[k]) });
    if (!('theta' in one)) throw new Error('singular');
    expect(one.theta).toBe(r.ok && r.kind === 'sharpe' ? r.a.theta : NaN);
  });
});

describe('θ̂ identities', () => {
  it('one factor: θ̂ = (mean / sd)² with divisor T (the squared Sharpe ratio)', () => {
    const f = data[0].map((r) => r[1]);
    const T = f.length;
    const m = f.reduce((s, v) => s + v, 0) / T;
    const v = f.reduce((s, x) => s + (x - m) ** 2, 0) / T;
    const r = squaredSharpe({ factors: data[0], factorNames: names, traded: names.map(() => true), lags: 0, model: ['CARRY'] });
    if (!('theta' in r)) throw new Error('singular');
    expect(r.theta).toBeCloseTo((m * m) / v, 14);
  });
  it('swapping A and B flips z and keeps p', () => {
    const ab = compareModels(input(0, ['MKT', 'CARRY'], ['MKT', 'GROWTH']));
    const ba = compareModels(input(0, ['MKT', 'GROWTH'], ['MKT', 'CARRY']));
    if (!ab.ok || !ba.ok || ab.kind !== 'sharpe' || ba.kind !== 'sharpe') throw new Error('expected the z test');
    expect(ba.z).toBeCloseTo(-ab.z, 12);
    expect(ba.p).toBeCloseTo(ab.p, 12);
  });
});

describe('nested models get the spanning test, not the z test', () => {
  it('B ⊂ A: kind nested, code nested-models, and the joint spanning test of A’s extra factors on B’s', () => {
    const r = compareModels(input(3, ['MKT', 'CARRY', 'GROWTH'], ['MKT']));
    expect(r.ok && r.kind).toBe('nested');
    if (!r.ok || r.kind !== 'nested') throw new Error('expected the nested comparison');
    expect(r.code).toBe('nested-models');
    expect(r.larger).toBe('a');
    expect(r.reason).toMatch(/nested/);
    expect(r.spanning.factors).toEqual(['CARRY', 'GROWTH']);
    expect(r.spanning.on).toEqual(['MKT']);
    // the same test computed by spanningTest on the larger model's factors alone
    const direct = spanningTest({ factors: data[3].map((row) => [row[0], row[1], row[2]]), factorNames: ['MKT', 'CARRY', 'GROWTH'], traded: [true, true, true], lags: cases[3].lags, test: ['CARRY', 'GROWTH'] });
    if (!('stat' in direct)) throw new Error('singular');
    expect(r.spanning.stat).toBeCloseTo(direct.stat, 12);
    expect(r.spanning.p).toBeCloseTo(direct.p, 12);
    expect(r.a.theta).toBeGreaterThan(r.b.theta); // adding factors never lowers the in-sample θ̂
  });
  it('A ⊂ B: larger is b; identical models are refused', () => {
    const r = compareModels(input(3, ['GROWTH'], ['MKT', 'GROWTH']));
    expect(r.ok && r.kind === 'nested' && r.larger).toBe('b');
    if (r.ok && r.kind === 'nested') expect(r.spanning.factors).toEqual(['MKT']);
    expect(() => compareModels(input(3, ['MKT', 'CARRY'], ['CARRY', 'MKT']))).toThrow(/same factors/);
  });
});

describe('caller mistakes', () => {
  it('a non-traded factor is refused with GmmInputError not-traded and a clear message', () => {
    const traded = [true, true, false, true, true];
    let err: unknown;
    try {
      compareModels(input(0, ['MKT', 'CARRY'], ['MKT', 'GROWTH'], traded));
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(GmmInputError);
    expect((err as GmmInputError).code).toBe('not-traded');
    expect((err as GmmInputError).series).toBe('GROWTH');
    expect((err as Error).message).toMatch(/'GROWTH' is not a traded factor/);
  });
  it('unknown names, empty models, a lag too long, ragged rows', () => {
    expect(() => compareModels(input(0, ['MKT', 'NOPE'], ['GROWTH']))).toThrow(/NOPE/);
    expect(() => compareModels(input(0, [], ['GROWTH']))).toThrow(GmmInputError);
    expect(() => compareModels({ ...input(0, ['MKT'], ['GROWTH']), lags: 400 })).toThrow(/too long/);
    const bad = data[0].map((r) => [...r]);
    bad[5] = bad[5].slice(0, 3);
    expect(() => compareModels({ ...input(0, ['MKT'], ['GROWTH']), factors: bad })).toThrow(/Row 6/);
  });
});

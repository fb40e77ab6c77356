/**
 * The two kernels of the symmetric cross-product (WebAssembly SIMD and plain TypeScript) give the
 * same long-run covariance, and both equal the textbook Γ_j sum written out here (Newey and West
 * 1987, the formula of methods.md) on odd sizes that exercise the padding; the blocked window-sum
 * path (hacFromColumnRanges) equals the whole-column path to the last bit.
 */
import { describe, expect, it } from 'vitest';
import { hacCovariance, secondMomentMatrix, useSimdKernel, wasmKernelAvailable } from '../../lib/gmm/index';
import { hacFromColumnRanges, hacFromColumns } from '../../lib/gmm/hac';
import { maxRel, normalSampler } from './helpers';

function gammaSum(x: Float64Array, T: number, p: number, L: number): Float64Array {
  const S = new Float64Array(p * p);
  for (let j = 0; j <= L; j++) {
    const w = j === 0 ? 1 : 1 - j / (L + 1);
    for (let t = j; t < T; t++)
      for (let a = 0; a < p; a++)
        for (let b = 0; b < p; b++) {
          const g = (x[t * p + a] * x[(t - j) * p + b]) / T;
          S[a * p + b] += w * g;
          if (j > 0) S[b * p + a] += w * g;
        }
  }
  return S;
}

describe('HAC kernels', () => {
  it('the SIMD kernel is available on Node 20 (WebAssembly SIMD)', () => {
    expect(wasmKernelAvailable()).toBe(true);
  });

  for (const [T, p, L] of [
    [7, 3, 2],
    [101, 5, 4],
    [250, 13, 0],
    [333, 30, 7],
  ] as const)
    it(`T = ${T}, p = ${p}, L = ${L}: SIMD = TypeScript = Γ_j sum`, () => {
      const z = normalSampler(T * 31 + p);
      const x = Float64Array.from({ length: T * p }, () => z());
      const ref = gammaSum(x, T, p, L);
      useSimdKernel(true);
      const simd = hacCovariance(x, T, p, L);
      const simdDemeaned = hacCovariance(x, T, p, L, true);
      const simdSecond = secondMomentMatrix(x, T, p);
      useSimdKernel(false);
      const js = hacCovariance(x, T, p, L);
      const jsDemeaned = hacCovariance(x, T, p, L, true);
      const jsSecond = secondMomentMatrix(x, T, p);
      useSimdKernel(true);
      expect(maxRel(simd, ref)).toBeLessThan(1e-12);
      expect(maxRel(js, ref)).toBeLessThan(1e-12);
      expect(maxRel(simdDemeaned, jsDemeaned)).toBeLessThan(1e-12);
      expect(maxRel(simdSecond, jsSecond)).toBeLessThan(1e-12);
      // exact symmetry
      for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) expect(simd[a * p + b]).toBe(simd[b * p + a]);
    });
});

describe('HAC by blocks of window sums (hacFromColumnRanges)', () => {
  // identity: the blocked path makes the same additions in the same order as the whole-column path,
  // so the two agree to the last bit; both are also checked against the Γ_j sum above
  for (const [T, p, L] of [
    [1300, 7, 9], // three blocks, an odd last block, p not a multiple of 4
    [1024, 8, 0], // blocks end exactly at T
    [2000, 5, 511], // lags just below a block
    [3000, 3, 600], // lags above a block: the whole-column path
    [90, 6, 3], // one short block
  ] as const)
    it(`T = ${T}, p = ${p}, L = ${L}: equals hacFromColumns to the last bit and the Γ_j sum to 1e-12`, () => {
      const z = normalSampler(T + 7 * p + L);
      const x = Float64Array.from({ length: T * p }, () => z());
      const ranged: [number, number][] = [];
      const blocked = hacFromColumnRanges(T, p, L, (a, t0, t1, buf) => {
        ranged.push([t0, t1]);
        for (let t = t0; t < t1; t++) buf[t - t0] = x[t * p + a];
      });
      const whole = hacFromColumns(T, p, L, (a, buf) => {
        for (let t = 0; t < T; t++) buf[t] = x[t * p + a];
      });
      const differing = Array.from(blocked).filter((v, i) => !Object.is(v, whole[i]));
      expect(differing).toEqual([]);
      expect(maxRel(blocked, gammaSum(x, T, p, L))).toBeLessThan(1e-12);
      // blocks of 512 window sums: each column is asked for a range, not the whole series
      const blocks = L <= 512 ? Math.ceil((T + L) / 512) : 1;
      expect(ranged).toHaveLength(blocks * p);
      if (blocks > 1) expect(Math.max(...ranged.map(([a, b]) => b - a))).toBeLessThanOrEqual(512 + L);
    });
});

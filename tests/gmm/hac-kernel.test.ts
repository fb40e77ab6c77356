/**
 * The two kernels of the symmetric cross-product (WebAssembly SIMD and plain TypeScript) give the
 * same long-run covariance, and both equal the textbook Γ_j sum written out here (Newey and West
 * 1987, the formula of methods.md) on odd sizes that exercise the padding.
 */
import { describe, expect, it } from 'vitest';
import { hacCovariance, secondMomentMatrix, useSimdKernel, wasmKernelAvailable } from '../../lib/gmm/index';
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

/**
 * The bootstrap's column-major draw path (lib/gmm/moments.ts momentsFromColumns, bootstrap.ts
 * recentredLongRun and lambdaInfluence) against the row-major formulas it replaced.
 * Source of every check: identities that must hold. The two layouts run the same additions in the
 * same order, so the results must agree to the last bit (Object.is on every element), not to a
 * tolerance: the row-major side is columnMeans and crossMoment over the rows, sdfMomentSeries +
 * withinBlockHac, and the influence series written out as its formula ψ_t = Σ_f H h_t + f̃_t (f̃_t'b)
 * − λ row by row.
 */
import { describe, expect, it } from 'vitest';
import { lambdaInfluence, recentredLongRun, withinBlockHac } from '../../lib/gmm/bootstrap';
import { toColumnMajor } from '../../lib/gmm/hac';
import { centreColumns, columnMeans, crossMoment, momentsFromColumns, momentsFromPacked, secondMomentFromColumns, secondMomentMatrix } from '../../lib/gmm/moments';
import { sdfMomentSeries, type SdfForm } from '../../lib/gmm/sdf-gmm';
import { normalSampler } from './helpers';

function data(T: number, N: number, K: number, seed: number) {
  const z = normalSampler(seed);
  const F = new Float64Array(T * K);
  const R = new Float64Array(T * N);
  for (let t = 0; t < T; t++) {
    let common = 0;
    for (let k = 0; k < K; k++) {
      F[t * K + k] = 0.004 * (k + 1) + 0.03 * z();
      common += F[t * K + k] * (0.4 + 0.3 * k);
    }
    for (let i = 0; i < N; i++) R[t * N + i] = 0.001 * i + (0.6 + 0.1 * i) * common + 0.02 * z();
  }
  return { R, F };
}

function sameBits(a: ArrayLike<number>, b: ArrayLike<number>): void {
  expect(a.length).toBe(b.length);
  const differing: number[] = [];
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) differing.push(i);
  expect(differing).toEqual([]);
}

const shapes = [
  [50, 3, 1],
  [61, 7, 4],
  [200, 11, 5],
  [97, 5, 9],
] as const;

describe('momentsFromColumns (and momentsFromPacked, built on it) equal the row-major sums to the last bit (identity)', () => {
  for (const [T, N, K] of shapes)
    it(`T = ${T}, N = ${N}, K = ${K}`, () => {
      const { R, F } = data(T, N, K, T + N + K);
      // the row-major reference: columnMeans and crossMoment over the rows of R
      const meanF = columnMeans(F, T, K);
      const Fc = centreColumns(F, T, K, meanF);
      const meanR = columnMeans(R, T, N);
      const covRF = crossMoment(R, N, Fc, K, T);
      const crossRF = Float64Array.from({ length: N * K }, (_, j) => covRF[j] + meanR[Math.floor(j / K)] * meanF[j % K]);
      const rows = { F, Fc, meanR, meanF, sigmaF: crossMoment(Fc, K, Fc, K, T), covRF, crossRF, Rcols: toColumnMajor(R, T, N) };
      const cols = momentsFromColumns(toColumnMajor(R, T, N), F, T, N, K);
      const packed = momentsFromPacked(R, F, T, N, K);
      for (const key of ['F', 'Fc', 'meanR', 'meanF', 'sigmaF', 'covRF', 'crossRF', 'Rcols'] as const) {
        sameBits(cols[key], rows[key]);
        sameBits(packed[key], rows[key]);
      }
      sameBits(packed.R, R);
      sameBits(secondMomentFromColumns(cols.Rcols, T, N), secondMomentMatrix(R, T, N));
    });
});

describe('recentredLongRun equals withinBlockHac of the row-major recentred series (identity)', () => {
  // T = 1,300 with blocks of 6 and L = 4 pads to 2,164 rows: five blocks of window sums
  const T = 1300;
  const N = 6;
  const K = 3;
  const { R, F } = data(T, N, K, 4);
  const m = momentsFromPacked(R, F, T, N, K);
  const b = [1.7, -0.8, 2.4];
  const c = Float64Array.from({ length: N }, (_, i) => 0.0003 * (i - 2));
  const cases: [SdfForm, boolean, Float64Array | null, number, number | null][] = [
    ['centred', false, c, 4, null],
    ['centred', false, c, 4, 6],
    ['centred', true, c, 3, 5],
    ['uncentred', false, null, 2, 7],
    ['uncentred', false, c, 0, 7],
    ['centred', false, null, 5, 1],
    ['centred', false, c, 3, T],
  ];
  for (const [form, fmk, cv, L, block] of cases)
    it(`${form}${fmk ? ', factor means known' : ''}, ${cv ? 'recentred' : 'no recentring'}, L = ${L}, block ${block ?? 'none'}`, () => {
      const h = sdfMomentSeries(m, b, form, fmk);
      if (cv) for (let t = 0; t < T; t++) for (let i = 0; i < N; i++) h[t * N + i] -= cv[i];
      sameBits(recentredLongRun(m, b, form, fmk, cv, L, block), withinBlockHac(h, T, N, L, block));
    });
});

describe('lambdaInfluence by columns equals the row-by-row formula (identity)', () => {
  for (const [T, N, K] of [[80, 9, 2], [120, 13, 5]] as const)
    it(`T = ${T}, N = ${N}, K = ${K}`, () => {
      const { R, F } = data(T, N, K, 9);
      const m = momentsFromPacked(R, F, T, N, K);
      const b = Float64Array.from({ length: K }, (_, k) => 1 - 0.5 * k);
      const H = Float64Array.from({ length: K * N }, (_, j) => Math.sin(j + 1));
      const h = sdfMomentSeries(m, b, 'centred', false);
      const { lambda, psi } = lambdaInfluence(m, b, H, (i, t0, t1, buf) => {
        for (let t = t0; t < t1; t++) buf[t - t0] = h[t * N + i];
      });
      // the formula, row by row
      const lam = new Float64Array(K);
      for (let a = 0; a < K; a++) for (let q = 0; q < K; q++) lam[a] += m.sigmaF[a * K + q] * b[q];
      const SH = new Float64Array(K * N);
      for (let a = 0; a < K; a++)
        for (let i = 0; i < N; i++) {
          let v = 0;
          for (let q = 0; q < K; q++) v += m.sigmaF[a * K + q] * H[q * N + i];
          SH[a * N + i] = v;
        }
      const want = new Float64Array(T * K);
      for (let t = 0; t < T; t++) {
        let fb = 0;
        for (let k = 0; k < K; k++) fb += m.Fc[t * K + k] * b[k];
        for (let a = 0; a < K; a++) {
          let v = 0;
          for (let i = 0; i < N; i++) v += SH[a * N + i] * h[t * N + i];
          want[t * K + a] = v + m.Fc[t * K + a] * fb - lam[a];
        }
      }
      sameBits(lambda, lam);
      sameBits(psi, want);
    });
});

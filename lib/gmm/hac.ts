/**
 * Long-run covariance (HAC) with Bartlett weights.
 *
 * Formula (Newey and West 1987): for a moment series x_t (T×p),
 *   Γ_j = (1/T) Σ_{t=j+1..T} x_t x_{t−j}',   w_j = 1 − j/(L+1),
 *   S = Γ_0 + Σ_{j=1..L} w_j (Γ_j + Γ_j').
 * x_t is used as given (not demeaned) unless `demean` is set. L = 0 is White's
 * heteroskedasticity-robust estimate.
 *
 * Computation: the Bartlett weights are a box kernel convolved with itself, so
 *   S = (1 / (T (L+1))) Σ_{m=−L..T−1} q_m q_m',   q_m = Σ_{t=max(0,m)..min(T−1,m+L)} x_t
 * (0-based t). This is the same number as the Γ_j sum (every pair (t, s) with |t − s| = j ≤ L
 * lies in exactly L + 1 − j windows) but costs one symmetric rank-(T+L) update instead of L + 1
 * cross-products, and it is positive semidefinite by construction. The symmetric product runs in
 * a WebAssembly SIMD kernel (syrk-wasm.ts) when available, else in the TypeScript kernel below;
 * `hacFromColumns` lets callers generate moment series column by column without a T×p copy.
 *
 * Paper: Newey, W. K. and West, K. D. (1987), "A Simple, Positive Semi-Definite,
 * Heteroskedasticity and Autocorrelation Consistent Covariance Matrix", Econometrica 55(3),
 * 703–708. Lag rule: Newey, W. K. and West, K. D. (1994), "Automatic Lag Selection in
 * Covariance Matrix Estimation", Review of Economic Studies 61(4), 631–653 (the plug-in
 * floor(4 (T/100)^(2/9)) is common practice). Lag limits of the ledger: L ≥ T/4 is refused
 * (`resolveLag`); L > 2·T^(1/3) earns a warning (Andrews, D. W. K. (1991), "Heteroskedasticity and
 * Autocorrelation Consistent Covariance Matrix Estimation", Econometrica 59(3), 817–858: the
 * MSE-optimal Bartlett lag grows like T^(1/3)).
 *
 * @example
 * // x_t = 1, −1, 1, −1 (T = 4, p = 1), L = 1:
 * // Γ_0 = 1, Γ_1 = (1/4)·3·(−1) = −0.75, S = 1 + 0.5·(−0.75·2) = 0.25
 * longRunCovariance([[1], [-1], [1], [-1]], { lags: 1 }) // → [[0.25]]
 */
import { GmmInputError } from './errors';
import { toNested } from './linalg';
import { KERNEL_CHUNK, wasmBlockedCrossProduct, wasmLayout, wasmSymmetricCrossProduct, wasmWorkArea } from './syrk-wasm';

let simdEnabled = true;

/**
 * Choose the kernel for the symmetric cross-products: the WebAssembly SIMD kernel (default, when
 * the engine supports it) or the plain TypeScript kernel. Both give the same numbers to rounding;
 * the switch exists for tests and benchmarks. Returns the previous setting.
 */
export function useSimdKernel(enabled: boolean): boolean {
  const prev = simdEnabled;
  simdEnabled = enabled;
  return prev;
}

/** Q'Q for column-major Qc (M×p), through the SIMD kernel when enabled and available. */
export function crossProductColumns(Qc: Float64Array, M: number, p: number): Float64Array {
  const work = simdEnabled ? wasmWorkArea(M, p) : null;
  if (!work) return symmetricCrossProduct(Qc, M, p);
  const { stride } = wasmLayout(M, p);
  for (let a = 0; a < p; a++) work.set(Qc.subarray(a * M, a * M + M), a * stride);
  return wasmSymmetricCrossProduct(M, p);
}

/** Plug-in lag rule L = floor(4 (T/100)^(2/9)) (common practice; Newey and West 1994). */
export function defaultLag(T: number): number {
  if (!(T > 0)) return 0;
  return Math.floor(4 * Math.pow(T / 100, 2 / 9));
}

/** The largest Bartlett lag the methods contract allows for T periods: the largest L with L < T/4. */
export function maxLag(T: number): number {
  return Math.max(0, Math.ceil(T / 4) - 1);
}

/**
 * Resolve and check a lag request against T (methods contract, "Long-run covariance"):
 * 'auto' gives the plug-in rule; an integer must satisfy 0 ≤ L < T/4.
 * @throws GmmInputError 'invalid-lags' naming the largest allowed lag for this T.
 */
export function resolveLag(lags: number | 'auto', T: number): number {
  const L = lags === 'auto' ? defaultLag(T) : lags;
  if (typeof L !== 'number' || !Number.isInteger(L) || L < 0)
    throw new GmmInputError('invalid-lags', `lags must be 'auto' or an integer ≥ 0; got ${String(lags)}.`);
  if (4 * L >= T)
    throw new GmmInputError(
      'invalid-lags',
      `lags = ${L} is too long for T = ${T} periods: the lag must be below T/4, so the largest allowed lag is ${maxLag(T)}.`,
    );
  return L;
}

/** Bartlett's MSE-optimal lag grows like T^(1/3) (Andrews 1991): the lag above which the ledger warns, 2·T^(1/3). */
export function lagWarningThreshold(T: number): number {
  return 2 * Math.cbrt(T);
}

/**
 * Symmetric product S = Qc' Qc for a column-major matrix Qc (column a occupies
 * Qc[a·M .. a·M + M − 1]), returned full (p×p, row-major). The hot loop: 4×4 register blocks over
 * chunks of rows so that the working set stays in cache.
 */
export function symmetricCrossProduct(Qc: Float64Array, M: number, p: number): Float64Array {
  const S = new Float64Array(p * p);
  const CH = 256;
  const last = p - 1;
  for (let t0 = 0; t0 < M; t0 += CH) {
    const t1 = Math.min(M, t0 + CH);
    for (let a = 0; a < p; a += 4) {
      const A0 = a * M;
      const A1 = Math.min(a + 1, last) * M;
      const A2 = Math.min(a + 2, last) * M;
      const A3 = Math.min(a + 3, last) * M;
      for (let b = a; b < p; b += 4) {
        const B0 = b * M;
        const B1 = Math.min(b + 1, last) * M;
        const B2 = Math.min(b + 2, last) * M;
        const B3 = Math.min(b + 3, last) * M;
        let s00 = 0, s01 = 0, s02 = 0, s03 = 0;
        let s10 = 0, s11 = 0, s12 = 0, s13 = 0;
        let s20 = 0, s21 = 0, s22 = 0, s23 = 0;
        let s30 = 0, s31 = 0, s32 = 0, s33 = 0;
        for (let t = t0; t < t1; t++) {
          const x0 = Qc[A0 + t], x1 = Qc[A1 + t], x2 = Qc[A2 + t], x3 = Qc[A3 + t];
          const y0 = Qc[B0 + t], y1 = Qc[B1 + t], y2 = Qc[B2 + t], y3 = Qc[B3 + t];
          s00 += x0 * y0; s01 += x0 * y1; s02 += x0 * y2; s03 += x0 * y3;
          s10 += x1 * y0; s11 += x1 * y1; s12 += x1 * y2; s13 += x1 * y3;
          s20 += x2 * y0; s21 += x2 * y1; s22 += x2 * y2; s23 += x2 * y3;
          s30 += x3 * y0; s31 += x3 * y1; s32 += x3 * y2; s33 += x3 * y3;
        }
        const r0 = a * p, r1 = r0 + p, r2 = r1 + p, r3 = r2 + p;
        const nb = Math.min(4, p - b);
        const na = Math.min(4, p - a);
        S[r0 + b] += s00;
        if (nb > 1) S[r0 + b + 1] += s01;
        if (nb > 2) S[r0 + b + 2] += s02;
        if (nb > 3) S[r0 + b + 3] += s03;
        if (na > 1) {
          S[r1 + b] += s10;
          if (nb > 1) S[r1 + b + 1] += s11;
          if (nb > 2) S[r1 + b + 2] += s12;
          if (nb > 3) S[r1 + b + 3] += s13;
        }
        if (na > 2) {
          S[r2 + b] += s20;
          if (nb > 1) S[r2 + b + 1] += s21;
          if (nb > 2) S[r2 + b + 2] += s22;
          if (nb > 3) S[r2 + b + 3] += s23;
        }
        if (na > 3) {
          S[r3 + b] += s30;
          if (nb > 1) S[r3 + b + 1] += s31;
          if (nb > 2) S[r3 + b + 2] += s32;
          if (nb > 3) S[r3 + b + 3] += s33;
        }
      }
    }
  }
  // The diagonal 4×4 blocks were filled completely (both triangles); copy the strict upper
  // triangle down so the result is exactly symmetric.
  for (let i = 0; i < p; i++) for (let j = i + 1; j < p; j++) S[j * p + i] = S[i * p + j];
  return S;
}

/**
 * Bartlett window sums of one series x (length T) into out[off .. off + T + L − 1]:
 * out[off + i] = Σ_{t=max(0,i−L)..min(T−1,i)} x_t. Sliding, refreshed exactly every 64 windows so
 * that rounding cannot drift.
 */
export function windowSumsInto(x: Float64Array, T: number, L: number, out: Float64Array, off: number): void {
  windowSumsRange(x, 0, T, L, 0, T + L, out, off);
}

let scratchBuffer = new Float64Array(0);

/**
 * A reusable work array for window sums (grown on demand, never shrunk): every long-run
 * covariance is computed to completion before the next starts (no re-entrancy), so one buffer
 * saves allocating and collecting T×p arrays on every call.
 */
function scratch(n: number): Float64Array {
  if (scratchBuffer.length < n) scratchBuffer = new Float64Array(Math.max(n, Math.floor(scratchBuffer.length * 1.5)));
  return scratchBuffer.subarray(0, n);
}

/**
 * HAC long-run covariance of a p-variate series given column by column: `fill(a, buf)` writes
 * series a (length T) into buf. The hot path of every N×N long-run covariance (the moment series
 * are generated straight into columns, never stored row-major). Returns the full p×p matrix.
 */
export function hacFromColumns(
  T: number,
  p: number,
  lags: number,
  fill: (a: number, buf: Float64Array) => void,
  demean = false,
): Float64Array {
  const L = lags;
  const M = T + L;
  // window sums go straight into the SIMD kernel's memory when it is in use
  const work = simdEnabled ? wasmWorkArea(M, p) : null;
  const stride = work ? wasmLayout(M, p).stride : M;
  const Qc = work ?? scratch(M * p);
  const buf = new Float64Array(T);
  for (let a = 0; a < p; a++) {
    fill(a, buf);
    if (demean) {
      let mean = 0;
      for (let t = 0; t < T; t++) mean += buf[t];
      mean /= T;
      for (let t = 0; t < T; t++) buf[t] -= mean;
    }
    windowSumsInto(buf, T, L, Qc, a * stride);
  }
  const S = work ? wasmSymmetricCrossProduct(M, p) : symmetricCrossProduct(Qc, M, p);
  const scale = 1 / (T * (L + 1));
  for (let i = 0; i < S.length; i++) S[i] *= scale;
  return S;
}

/**
 * Window sums out[off + (i − i0)] for the windows i ∈ [i0, i1) of {@link windowSumsInto}, from
 * x[t0 ..] held in xr (xr[k] = x[t0 + k]; t0 ≤ max(0, i0 − L), and xr reaches t = min(T, i1) − 1).
 * i0 must be a multiple of 64: the sums are then refreshed at the same windows, and every window's
 * value is the one windowSumsInto gives, to the last bit.
 */
function windowSumsRange(xr: Float64Array, t0: number, T: number, L: number, i0: number, i1: number, out: Float64Array, off: number): void {
  if (L === 0) {
    for (let i = i0; i < i1; i++) out[off + i - i0] = xr[i - t0];
    return;
  }
  let q = 0;
  for (let i = i0; i < i1; i++) {
    const m = i - L;
    if ((i & 63) === 0) {
      q = 0;
      const hi = Math.min(T - 1, m + L);
      for (let t = Math.max(0, m); t <= hi; t++) q += xr[t - t0];
    } else {
      const add = m + L;
      if (add < T) q += xr[add - t0];
      if (m >= 1) q -= xr[m - 1 - t0];
    }
    out[off + i - i0] = q;
  }
}

/**
 * {@link hacFromColumns} for series that can be generated over any range of periods:
 * `fill(a, t0, t1, buf)` writes x_a,t for t ∈ [t0, t1) into buf[0 .. t1 − t0). The window sums are
 * made 512 rows at a time and each block goes straight into the SIMD kernel, so the (T+L)×p window
 * sums are never stored whole and the kernel reads them from cache, not memory; the numbers are
 * identical to hacFromColumns's (tests/gmm/hac-kernel.test.ts). Without the kernel, with the
 * TypeScript kernel chosen, or for a lag longer than a block, it is hacFromColumns.
 */
export function hacFromColumnRanges(T: number, p: number, lags: number, fill: (a: number, t0: number, t1: number, buf: Float64Array) => void): Float64Array {
  const L = lags;
  const blocked = simdEnabled && L <= KERNEL_CHUNK ? wasmBlockedCrossProduct(KERNEL_CHUNK, p) : null;
  if (!blocked) return hacFromColumns(T, p, L, (a, buf) => fill(a, 0, T, buf));
  const M = T + L;
  const xr = new Float64Array(KERNEL_CHUNK + L);
  const { work } = blocked;
  for (let i0 = 0; i0 < M; i0 += KERNEL_CHUNK) {
    const i1 = Math.min(M, i0 + KERNEL_CHUNK);
    const rows = i1 - i0;
    const stride = rows + (rows & 1);
    const t0 = Math.max(0, i0 - L);
    const t1 = Math.min(T, i1);
    for (let a = 0; a < p; a++) {
      if (t1 > t0) fill(a, t0, t1, xr);
      windowSumsRange(xr, t0, T, L, i0, i1, work, a * stride);
    }
    blocked.add(rows);
  }
  const S = blocked.result();
  const scale = 1 / (T * (L + 1));
  for (let i = 0; i < S.length; i++) S[i] *= scale;
  return S;
}

/** Column-major copy (p×T) of a row-major T×p matrix, by cache blocks. */
export function toColumnMajor(x: Float64Array, T: number, p: number): Float64Array {
  const xc = new Float64Array(T * p);
  const B = 64;
  for (let t0 = 0; t0 < T; t0 += B) {
    const t1 = Math.min(T, t0 + B);
    // the B rows of this block stay in cache; each column's run of B values is written contiguously
    for (let a = 0; a < p; a++) {
      const col = a * T;
      for (let t = t0; t < t1; t++) xc[col + t] = x[t * p + a];
    }
  }
  return xc;
}

/**
 * HAC long-run covariance of a row-major series x (T×p) on precomputed data. Returns the full
 * symmetric p×p matrix (row-major). The caller guarantees finite input and 0 ≤ lags < T.
 */
export function hacCovariance(
  x: Float64Array,
  T: number,
  p: number,
  lags: number,
  demean = false,
): Float64Array {
  if (p === 1) return hacFromColumns(T, 1, lags, (_a, buf) => buf.set(x.subarray(0, T)), demean);
  const xc = toColumnMajor(x, T, p);
  return hacFromColumns(T, p, lags, (a, buf) => buf.set(xc.subarray(a * T, a * T + T)), demean);
}

/** Options of {@link longRunCovariance}. */
export interface LongRunCovarianceOptions {
  /** Bartlett lag L (integer ≥ 0) or 'auto' for floor(4 (T/100)^(2/9)). */
  readonly lags: number | 'auto';
  /** Subtract the sample mean first (default false: x_t used as given). */
  readonly demean?: boolean;
}

/**
 * HAC long-run covariance of a plain-array series (rows = periods). See the module comment for
 * the formula and paper.
 *
 * @param series T×p array of finite numbers.
 * @param options lag (or 'auto') and demeaning.
 * @returns the p×p long-run covariance S.
 * @throws GmmInputError on empty/ragged/non-finite input or a lag outside 0..T−1.
 * @example
 * longRunCovariance([[1], [-1], [1], [-1]], { lags: 1 }) // → [[0.25]]
 */
export function longRunCovariance(series: readonly (readonly number[])[], options: LongRunCovarianceOptions): number[][] {
  const T = series.length;
  if (T === 0) throw new GmmInputError('empty-input', 'The series has no rows.');
  const p = series[0].length;
  if (p === 0) throw new GmmInputError('empty-input', 'The series has no columns.');
  const x = new Float64Array(T * p);
  for (let t = 0; t < T; t++) {
    const row = series[t];
    if (row.length !== p)
      throw new GmmInputError('ragged-row', `Row ${t + 1} has ${row.length} values; expected ${p}.`, { row: t });
    for (let a = 0; a < p; a++) {
      const v = row[a];
      if (!Number.isFinite(v))
        throw new GmmInputError('non-finite', `Row ${t + 1}, column ${a + 1} is not a finite number.`, { row: t });
      x[t * p + a] = v;
    }
  }
  const L = options.lags === 'auto' ? defaultLag(T) : options.lags;
  if (!Number.isInteger(L) || L < 0 || L >= T)
    throw new GmmInputError('invalid-lags', `The lag must be an integer from 0 to ${T - 1}; got ${String(options.lags)}.`);
  return toNested(hacCovariance(x, T, p, L, options.demean ?? false), p, p);
}

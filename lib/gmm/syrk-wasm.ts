/**
 * Symmetric cross-product kernel S = Q'Q in WebAssembly SIMD (f64x2), the hot loop of every
 * long-run covariance. Source: the WebAssembly text lib/gmm/syrk.wat; its bytes
 * (syrk-wasm-bytes.ts) are assembled from it by the `wabt` npm package (`npm run build:wasm`), and
 * tests/gmm/syrk-wasm.test.ts checks on every test run that the committed bytes equal the source
 * assembled. When the engine lacks WebAssembly SIMD the caller falls back to the plain TypeScript
 * kernel in hac.ts, which computes the same numbers.
 *
 * Measured speed-up over the TypeScript kernel: 1.75–3.8× when first measured (T 600–12,000,
 * p 25–100). Re-measured 2026-12-02 with bench/syrk-kernel.bench.ts (Node 20.20, 2 cores under a
 * load average of about 11.6, so noisy; medians of alternating runs): the Q'Q kernel alone 3.0×
 * (T 600, p 25), 7.5× (600, 100), 7.8× (3,000, 50), 10.9× (12,000, 25), 2.3× (12,000, 100); the
 * whole hacCovariance with L = 5 (window sums and copies included) 1.2×, 5.7×, 1.7×, 1.1×, 1.3×.
 *
 * Kernel: Q is column-major with `M` (even) rows and `p` (multiple of 4) columns at byte offset
 * `q`; S (p×p, row-major, zeroed) at byte offset `s`. Rows are processed in chunks of `ch` so the
 * working set stays in cache; within a chunk, 2×4 blocks of S accumulate in f64x2 registers over
 * pairs of rows. Only blocks on or above the diagonal are computed (a block row starts at the
 * 4-aligned column below the diagonal); the caller mirrors the upper triangle.
 *
 * @example
 * // wasmSymmetricCrossProduct(Qc, M, p) equals symmetricCrossProduct(Qc, M, p) to rounding
 * // (tests/gmm/hac-kernel.test.ts).
 */
import { SYRK_WASM } from './syrk-wasm-bytes';

const wasmBytes = (): Uint8Array<ArrayBuffer> => Uint8Array.from(SYRK_WASM);

interface Kernel {
  memory: WebAssembly.Memory;
  syrk: (q: number, M: number, p: number, s: number, ch: number) => void;
}

let kernel: Kernel | null | undefined;

function getKernel(): Kernel | null {
  if (kernel !== undefined) return kernel;
  kernel = null;
  try {
    if (typeof WebAssembly !== 'object') return null;
    const bytes = wasmBytes();
    if (!WebAssembly.validate(bytes)) return null;
    const memory = new WebAssembly.Memory({ initial: 16 });
    const instance = new WebAssembly.Instance(new WebAssembly.Module(bytes), { env: { memory } });
    kernel = { memory, syrk: instance.exports.syrk as Kernel['syrk'] };
  } catch {
    kernel = null;
  }
  return kernel;
}

/** true when the SIMD kernel is available in this engine. */
export function wasmKernelAvailable(): boolean {
  return getKernel() !== null;
}

/** Padded layout of the work area: column stride (even) and padded column count (multiple of 4). */
export function wasmLayout(M: number, p: number): { stride: number; pPad: number } {
  return { stride: M + (M & 1), pPad: Math.ceil(p / 4) * 4 };
}

/**
 * A Float64Array view on the kernel's memory with room for the padded column-major Q
 * (pPad × stride, zeroed) followed by S (pPad × pPad, zeroed). Null without the kernel.
 * The view is valid until the next call of this function.
 */
export function wasmWorkArea(M: number, p: number): Float64Array | null {
  const k = getKernel();
  if (!k) return null;
  const { stride, pPad } = wasmLayout(M, p);
  const doubles = pPad * stride + pPad * pPad;
  const bytes = doubles * 8;
  const have = k.memory.buffer.byteLength;
  if (have < bytes) k.memory.grow(Math.ceil((bytes - have) / 65536));
  const view = new Float64Array(k.memory.buffer, 0, doubles);
  view.fill(0);
  return view;
}

/**
 * S = Q'Q (p×p, full, row-major) for the Q written into the work area returned by
 * wasmWorkArea(M, p) (column a at offset a·stride). Call only after wasmWorkArea succeeded.
 */
export function wasmSymmetricCrossProduct(M: number, p: number): Float64Array {
  const k = getKernel()!;
  const { stride, pPad } = wasmLayout(M, p);
  const sOffset = pPad * stride * 8;
  k.syrk(0, stride, pPad, sOffset, KERNEL_CHUNK);
  return mirrored(new Float64Array(k.memory.buffer, sOffset, pPad * pPad), p, pPad);
}

/** Rows the kernel takes at a time (its `ch`): the working set of one pass stays in cache. */
export const KERNEL_CHUNK = 512;

function mirrored(Sp: Float64Array, p: number, pPad: number): Float64Array {
  const S = new Float64Array(p * p);
  for (let i = 0; i < p; i++) {
    for (let j = i; j < p; j++) {
      const v = Sp[i * pPad + j];
      S[i * p + j] = v;
      S[j * p + i] = v;
    }
  }
  return S;
}

/** Q'Q accumulated over blocks of rows (see {@link wasmBlockedCrossProduct}). */
export interface BlockedCrossProduct {
  /** Column-major room for one block: column a of a block of r rows at a·(r + r mod 2). */
  readonly work: Float64Array;
  /** Adds the block of `rows` rows now in `work` (an odd count gets a zero row). */
  add(rows: number): void;
  /** S = Σ Q_b'Q_b over the blocks added (p×p, full, row-major). */
  result(): Float64Array;
}

/**
 * S = Q'Q for a Q that is produced block by block, at most `maxRows` (even) rows at a time, so that
 * Q is never held whole: each block is written into `work` and added to S by the kernel. With
 * blocks of KERNEL_CHUNK rows, S receives the same additions in the same order as one
 * {@link wasmSymmetricCrossProduct} over the stacked Q (the kernel's own chunks are those blocks),
 * so the two give identical numbers. Null without the kernel. Valid until the next call of this
 * function or of {@link wasmWorkArea}.
 */
export function wasmBlockedCrossProduct(maxRows: number, p: number): BlockedCrossProduct | null {
  const k = getKernel();
  if (!k) return null;
  const { stride, pPad } = wasmLayout(maxRows, p);
  const doubles = pPad * stride + pPad * pPad;
  const have = k.memory.buffer.byteLength;
  if (have < doubles * 8) k.memory.grow(Math.ceil((doubles * 8 - have) / 65536));
  const work = new Float64Array(k.memory.buffer, 0, pPad * stride);
  const sOffset = pPad * stride * 8;
  const Sp = new Float64Array(k.memory.buffer, sOffset, pPad * pPad);
  Sp.fill(0);
  return {
    work,
    add(rows) {
      const r = rows + (rows & 1);
      // the zero row of an odd block and the zero columns up to a multiple of four
      if (rows & 1) for (let a = 0; a < p; a++) work[a * r + rows] = 0;
      work.fill(0, p * r, pPad * r);
      k.syrk(0, r, pPad, sOffset, KERNEL_CHUNK);
    },
    result: () => mirrored(Sp, p, pPad),
  };
}

/**
 * Symmetric cross-product kernel S = Q'Q in WebAssembly SIMD (f64x2), the hot loop of every
 * long-run covariance. The module is assembled here, byte by byte, from the instruction list
 * below (no binary blob, no I/O); when the engine lacks WebAssembly SIMD the caller falls back to
 * the plain TypeScript kernel in hac.ts, which computes the same numbers.
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

// ---- a minimal assembler -------------------------------------------------------------------
const uleb = (n: number): number[] => {
  const out: number[] = [];
  do {
    let b = n & 0x7f;
    n >>>= 7;
    if (n !== 0) b |= 0x80;
    out.push(b);
  } while (n !== 0);
  return out;
};
const sleb = (n: number): number[] => {
  const out: number[] = [];
  for (;;) {
    const b = n & 0x7f;
    n >>= 7;
    if ((n === 0 && (b & 0x40) === 0) || (n === -1 && (b & 0x40) !== 0)) {
      out.push(b);
      return out;
    }
    out.push(b | 0x80);
  }
};
const vec = (items: number[][]): number[] => [...uleb(items.length), ...items.flat()];
const str = (s: string): number[] => [...uleb(s.length), ...Array.from(s, (c) => c.charCodeAt(0))];
const section = (id: number, body: number[]): number[] => [id, ...uleb(body.length), ...body];

const I32 = 0x7f;
const V128 = 0x7b;
const op = {
  get: (i: number) => [0x20, ...uleb(i)],
  set: (i: number) => [0x21, ...uleb(i)],
  i32: (v: number) => [0x41, ...sleb(v)],
  add: [0x6a],
  mul: [0x6c],
  shl: [0x74],
  and: [0x71],
  geU: [0x4f],
  ltU: [0x49],
  block: [0x02, 0x40],
  loop: [0x03, 0x40],
  end: [0x0b],
  br: (d: number) => [0x0c, ...uleb(d)],
  brIf: (d: number) => [0x0d, ...uleb(d)],
  select: [0x1b],
  f64load: (off: number) => [0x2b, 3, ...uleb(off)],
  f64store: (off: number) => [0x39, 3, ...uleb(off)],
  f64add: [0xa0],
  v128load: (off: number) => [0xfd, ...uleb(0), 4, ...uleb(off)],
  v128zero: [0xfd, ...uleb(12), ...new Array(16).fill(0)],
  f64x2add: [0xfd, ...uleb(240)],
  f64x2mul: [0xfd, ...uleb(242)],
  lane: (l: number) => [0xfd, ...uleb(33), l],
};

function buildModule(): Uint8Array<ArrayBuffer> {
  // params: 0 q, 1 M, 2 p, 3 s, 4 ch
  const [q, M, p, s, ch] = [0, 1, 2, 3, 4];
  // i32 locals
  const L0 = 5;
  const [colBytes, t0, tStart, tEnd, a, b, A0, A1, B0, B1, B2, B3, tb, sAddr, rowBytes] = Array.from({ length: 15 }, (_, i) => L0 + i);
  const V0 = L0 + 15;
  const acc = (i: number, j: number) => V0 + i * 4 + j; // 8 accumulators
  const x0 = V0 + 8;
  const x1 = V0 + 9;
  const y = V0 + 10;
  const code: number[] = [];
  const emit = (...parts: number[][]) => parts.forEach((x) => code.push(...x));

  emit(op.get(M), op.i32(3), op.shl, op.set(colBytes));
  emit(op.get(p), op.i32(3), op.shl, op.set(rowBytes));
  emit(op.i32(0), op.set(t0));
  // for t0
  emit(op.block, op.loop);
  emit(op.get(t0), op.get(M), op.geU, op.brIf(1));
  emit(op.get(t0), op.i32(3), op.shl, op.set(tStart));
  // tEnd = min(t0 + ch, M) << 3
  emit(op.get(t0), op.get(ch), op.add, op.get(M), op.get(t0), op.get(ch), op.add, op.get(M), op.ltU, op.select, op.i32(3), op.shl, op.set(tEnd));
  emit(op.i32(0), op.set(a));
  // for a (step 2)
  emit(op.block, op.loop);
  emit(op.get(a), op.get(p), op.geU, op.brIf(1));
  emit(op.get(q), op.get(a), op.get(colBytes), op.mul, op.add, op.set(A0));
  emit(op.get(A0), op.get(colBytes), op.add, op.set(A1));
  emit(op.get(a), op.i32(-4), op.and, op.set(b));
  // for b (step 4)
  emit(op.block, op.loop);
  emit(op.get(b), op.get(p), op.geU, op.brIf(1));
  emit(op.get(q), op.get(b), op.get(colBytes), op.mul, op.add, op.set(B0));
  emit(op.get(B0), op.get(colBytes), op.add, op.set(B1));
  emit(op.get(B1), op.get(colBytes), op.add, op.set(B2));
  emit(op.get(B2), op.get(colBytes), op.add, op.set(B3));
  for (let i = 0; i < 2; i++) for (let j = 0; j < 4; j++) emit(op.v128zero, op.set(acc(i, j)));
  emit(op.get(tStart), op.set(tb));
  // for tb (step 16 bytes = 2 rows)
  emit(op.block, op.loop);
  emit(op.get(tb), op.get(tEnd), op.geU, op.brIf(1));
  emit(op.get(A0), op.get(tb), op.add, op.v128load(0), op.set(x0));
  emit(op.get(A1), op.get(tb), op.add, op.v128load(0), op.set(x1));
  const Bs = [B0, B1, B2, B3];
  for (let j = 0; j < 4; j++) {
    emit(op.get(Bs[j]), op.get(tb), op.add, op.v128load(0), op.set(y));
    emit(op.get(acc(0, j)), op.get(x0), op.get(y), op.f64x2mul, op.f64x2add, op.set(acc(0, j)));
    emit(op.get(acc(1, j)), op.get(x1), op.get(y), op.f64x2mul, op.f64x2add, op.set(acc(1, j)));
  }
  emit(op.get(tb), op.i32(16), op.add, op.set(tb));
  emit(op.br(0), op.end, op.end);
  // S[a, b + j] += hsum(acc0j); S[a + 1, b + j] += hsum(acc1j)
  emit(op.get(s), op.get(a), op.get(rowBytes), op.mul, op.add, op.get(b), op.i32(3), op.shl, op.add, op.set(sAddr));
  for (let i = 0; i < 2; i++)
    for (let j = 0; j < 4; j++) {
      const off = 8 * j;
      emit(op.get(sAddr), i === 1 ? [...op.get(rowBytes), ...op.add] : []);
      emit(op.get(sAddr), i === 1 ? [...op.get(rowBytes), ...op.add] : [], op.f64load(off));
      emit(op.get(acc(i, j)), op.lane(0), op.f64add, op.get(acc(i, j)), op.lane(1), op.f64add);
      emit(op.f64store(off));
    }
  emit(op.get(b), op.i32(4), op.add, op.set(b));
  emit(op.br(0), op.end, op.end);
  emit(op.get(a), op.i32(2), op.add, op.set(a));
  emit(op.br(0), op.end, op.end);
  emit(op.get(t0), op.get(ch), op.add, op.set(t0));
  emit(op.br(0), op.end, op.end);
  emit(op.end);

  const locals = vec([
    [...uleb(15), I32],
    [...uleb(11), V128],
  ]);
  const body = [...locals, ...code];
  const bytes = [
    0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00,
    ...section(1, vec([[0x60, ...vec([[I32], [I32], [I32], [I32], [I32]]), ...vec([])]])),
    ...section(2, vec([[...str('env'), ...str('memory'), 0x02, 0x00, ...uleb(1)]])),
    ...section(3, vec([uleb(0)])),
    ...section(7, vec([[...str('syrk'), 0x00, ...uleb(0)]])),
    ...section(10, vec([[...uleb(body.length), ...body]])),
  ];
  return new Uint8Array(bytes);
}

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
    const bytes = buildModule();
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
  k.syrk(0, stride, pPad, sOffset, 512);
  const Sp = new Float64Array(k.memory.buffer, sOffset, pPad * pPad);
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

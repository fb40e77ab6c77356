/**
 * Speed of the WebAssembly SIMD kernel (lib/gmm/syrk.wat) against the plain TypeScript kernel
 * (hac.ts), same numbers (`npx tsx bench/run.ts syrk`; alone: `npx tsx bench/syrk-kernel.bench.ts`).
 * Two rows per size: the symmetric cross-product Q'Q alone (crossProductColumns, Q of M = T + L
 * rows) and the whole hacCovariance with L = 5 (window sums and copies included). Median of several
 * alternating runs on an invented T×p series. Fails when the kernels disagree beyond 1e-12 of the
 * largest entry.
 */
import { cpus, loadavg } from 'node:os';
import { crossProductColumns, hacCovariance, useSimdKernel, wasmKernelAvailable } from '../lib/gmm/index';
import { boxMuller, mulberry32 } from '../lib/gmm/random';

if (!wasmKernelAvailable()) {
  console.error('no WebAssembly SIMD in this engine');
  process.exit(1);
}
const sizes: [number, number][] = [[600, 25], [600, 100], [3000, 50], [12000, 25], [12000, 100]];
console.log(`node ${process.version}, ${cpus().length} cores, load ${loadavg()[0].toFixed(2)}`);
console.log('     T     p  what                  TypeScript ms   SIMD ms   speed-up');
let failed = false;
for (const [T, p] of sizes) {
  const z = boxMuller(mulberry32(T + p));
  const x = Float64Array.from({ length: T * p }, () => z());
  const reps = Math.max(5, Math.min(41, Math.round(2e8 / (T * p * p))));
  const M = T + 5;
  const Qc = Float64Array.from({ length: M * p }, () => z());
  const jobs: [string, () => Float64Array][] = [
    ["Q'Q kernel", () => crossProductColumns(Qc, M, p)],
    ['hacCovariance, L = 5', () => hacCovariance(x, T, p, 5)],
  ];
  for (const [what, job] of jobs) {
    const time = (simd: boolean): [number, Float64Array] => {
      useSimdKernel(simd);
      const t0 = performance.now();
      const S = job();
      return [performance.now() - t0, S];
    };
    time(true);
    time(false);
    const ts: number[] = [];
    const ws: number[] = [];
    let worst = 0;
    for (let r = 0; r < reps; r++) {
      const [a, Sa] = time(false);
      const [b, Sb] = time(true);
      ts.push(a);
      ws.push(b);
      let scale = 0;
      for (const v of Sa) scale = Math.max(scale, Math.abs(v));
      for (let i = 0; i < Sa.length; i++) worst = Math.max(worst, Math.abs(Sa[i] - Sb[i]) / scale);
    }
    useSimdKernel(true);
    const med = (v: number[]) => v.sort((u, w) => u - w)[Math.floor(v.length / 2)];
    const mt = med(ts);
    const mw = med(ws);
    if (worst > 1e-12) failed = true;
    console.log(`${String(T).padStart(6)} ${String(p).padStart(5)}  ${what.padEnd(20)} ${mt.toFixed(2).padStart(14)} ${mw.toFixed(2).padStart(9)} ${(mt / mw).toFixed(2).padStart(9)}×   (max diff ${worst.toExponential(1)} of the largest entry)`);
  }
}
console.log(`load after: ${loadavg()[0].toFixed(2)}`);
process.exit(failed ? 1 : 0);

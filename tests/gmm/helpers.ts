/**
 * Test helpers: a small seeded PRNG (mulberry32 + Box–Muller; common practice), an invented
 * simulated economy, a bridge to the Python reference and closeness checks that record the
 * largest relative disagreement seen.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { boxMuller, mulberry32 } from '../../lib/gmm/random';

export { mulberry32 };

/** Standard normal draws: Box–Muller on mulberry32 (both from lib/gmm/random.ts). */
export function normalSampler(seed: number): () => number {
  return boxMuller(mulberry32(seed));
}

export interface Economy {
  returns: number[][];
  factors: number[][];
  betas: number[][];
}

/**
 * An invented economy: K factors with AR(1) persistence `phi` and cross-correlation `rho`,
 * means `mu`; N assets with loadings in [0.2, 1.6], expected excess return β'λ (λ = mu) plus a
 * pricing error `alphaScale`·N(0,1), idiosyncratic noise `noise`.
 */
export function simulateEconomy(opts: {
  T: number;
  N: number;
  K: number;
  seed: number;
  phi?: number;
  rho?: number;
  mu?: number[];
  sd?: number[];
  noise?: number;
  alphaScale?: number;
}): Economy {
  const { T, N, K, seed } = opts;
  const z = normalSampler(seed);
  const phi = opts.phi ?? 0.2;
  const rho = opts.rho ?? 0.3;
  const mu = opts.mu ?? Array.from({ length: K }, (_, k) => 0.004 + 0.002 * k);
  const sd = opts.sd ?? Array.from({ length: K }, (_, k) => 0.03 + 0.01 * k);
  const noise = opts.noise ?? 0.02;
  const betas = Array.from({ length: N }, () => Array.from({ length: K }, () => 0.2 + 1.4 * (z() * 0.25 + 0.5)));
  const alphas = Array.from({ length: N }, () => (opts.alphaScale ?? 0.0005) * z());
  const factors: number[][] = [];
  let prev = new Array<number>(K).fill(0);
  for (let t = 0; t < T; t++) {
    const common = z();
    const e = Array.from({ length: K }, () => Math.sqrt(1 - rho) * z() + Math.sqrt(rho) * common);
    const cur = e.map((v, k) => phi * prev[k] + Math.sqrt(1 - phi * phi) * v);
    prev = cur;
    factors.push(cur.map((v, k) => mu[k] + sd[k] * v));
  }
  const returns = factors.map((f) =>
    betas.map((bi, i) => {
      let r = alphas[i];
      for (let k = 0; k < K; k++) r += bi[k] * f[k];
      return r + noise * z();
    }),
  );
  return { returns, factors, betas };
}

const here = dirname(fileURLToPath(import.meta.url));
export const REFERENCE_SCRIPT = join(here, '..', 'reference', 'gmm_reference.py');

/** Run the numpy/scipy/statsmodels reference on `input` (JSON) and return its output. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- untyped JSON from the Python reference
export function runReference(input: unknown): any {
  const dir = mkdtempSync(join(tmpdir(), 'keelson-ref-'));
  const inFile = join(dir, 'in.json');
  const outFile = join(dir, 'out.json');
  writeFileSync(inFile, JSON.stringify(input));
  const r = spawnSync('/usr/bin/python3', [REFERENCE_SCRIPT, inFile, outFile], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`reference failed: ${r.stderr}`);
  return JSON.parse(readFileSync(outFile, 'utf8'));
}

/** Largest relative disagreement measured by `relDiff` in this process (for the report). */
export const disagreement = { max: 0, where: '' };

/** |a − b| / max(|b|, floor); records the maximum. */
export function relDiff(a: number, b: number, where = '', floor = 1e-300): number {
  const d = Math.abs(a - b) / Math.max(Math.abs(b), floor);
  if (d > disagreement.max) {
    disagreement.max = d;
    disagreement.where = where;
  }
  return d;
}

/**
 * Elementwise relative closeness of (nested) arrays or numbers. For arrays the floor of the
 * denominator is 1e-6 × the largest |element| of the expected array, so entries that are zero by
 * construction are compared on the array's scale.
 */
export function maxRel(actual: unknown, expected: unknown, where = ''): number {
  const a = flat(actual);
  const b = flat(expected);
  if (a.length !== b.length) throw new Error(`${where}: length ${a.length} vs ${b.length}`);
  const scale = Math.max(...b.map(Math.abs), 0);
  let worst = 0;
  for (let i = 0; i < a.length; i++) worst = Math.max(worst, relDiff(a[i], b[i], where, Math.max(1e-6 * scale, 1e-300)));
  return worst;
}

function flat(x: unknown): number[] {
  if (typeof x === 'number') return [x];
  if (ArrayBuffer.isView(x)) return Array.from(x as unknown as ArrayLike<number>);
  if (Array.isArray(x)) return x.flatMap(flat);
  throw new Error(`not numeric: ${JSON.stringify(x)}`);
}

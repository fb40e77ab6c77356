/**
 * The invented economy the deep-check, model-choice and queue benches share: K correlated factors
 * (one common shock, weight 0.2) with means 0.003–0.006 and volatilities 0.03–0.046, N assets with
 * loadings in [0.2, 0.8] on every factor and idiosyncratic noise of 0.02. Seeded (mulberry32 with
 * Box–Muller normals), so a bench sees the same numbers on every machine.
 */
import { mulberry32 } from '../lib/gmm/random';

/** Standard normal draws from a seeded mulberry32 stream (Box–Muller, cosine branch). */
export function normals(seed: number): () => number {
  const u = mulberry32(seed);
  return () => Math.sqrt(-2 * Math.log(u() + 1e-300)) * Math.cos(2 * Math.PI * u());
}

/** T periods of returns (T×N) and factors (T×K) of the shared bench economy. */
export function benchEconomy(T: number, N: number, K: number, seed: number): { returns: number[][]; factors: number[][] } {
  const z = normals(seed);
  const beta = Array.from({ length: N }, () => Array.from({ length: K }, () => 0.2 + 0.6 * Math.abs(z())));
  const factors: number[][] = [];
  const returns: number[][] = [];
  for (let t = 0; t < T; t++) {
    const c = z();
    const f = Array.from({ length: K }, (_, k) => 0.003 + 0.001 * (k % 4) + (0.03 + 0.004 * (k % 5)) * (0.8 * z() + 0.2 * c));
    factors.push(f);
    returns.push(beta.map((b) => b.reduce((s, bk, k) => s + bk * f[k], 0) + 0.02 * z()));
  }
  return { returns, factors };
}

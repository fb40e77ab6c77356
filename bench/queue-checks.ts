/**
 * The invented deep checks of the queue benches (bench/queue.bench.ts, bench/queue-timeline.ts):
 * a bootstrap on a factor economy with known loadings, and a subset sweep on benchEconomy.
 */
import type { BootstrapInput } from '../lib/gmm/index';
import type { CheckInput } from '../server/services/jobs-input';
import { benchEconomy, normals } from './economy';

/** Bootstrap, second stage, iid, T periods of N returns on K factors, `draws` draws. */
export function bootstrapCheck(T: number, N: number, K: number, draws: number, seed: number): Extract<CheckInput, { kind: 'bootstrap' }> {
  const z = normals(seed);
  const beta = Array.from({ length: N }, () => Array.from({ length: K }, () => 0.2 + 0.6 * Math.abs(z())));
  const factors: number[][] = [];
  const returns: number[][] = [];
  for (let t = 0; t < T; t++) {
    const f = Array.from({ length: K }, (_, k) => 0.003 + 0.001 * k + 0.03 * z());
    factors.push(f);
    returns.push(beta.map((b) => b.reduce((s, bk, k) => s + bk * f[k], 0) + 0.02 * z()));
  }
  const input: BootstrapInput = {
    returns,
    factors,
    factorNames: Array.from({ length: K }, (_, k) => `F${k + 1}`),
    options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, scheme: 'iid', draws, seed: 5 },
  };
  return { kind: 'bootstrap', input, total: draws };
}

/** Subset sweep of all K candidates (all traded) on benchEconomy(T, N, K, seed). */
export function sweepCheck(T: number, N: number, K: number, seed: number): Extract<CheckInput, { kind: 'subset-sweep' }> {
  const { returns, factors } = benchEconomy(T, N, K, seed);
  const names = Array.from({ length: K }, (_, k) => `C${k + 1}`);
  return {
    kind: 'subset-sweep',
    total: 2 ** K - 1,
    input: { returns, factors, factorNames: names, traded: names.map(() => true), options: { lags: 'auto', form: 'centred', factorMeansKnown: false, weighting: 'identity', stage: 'second', level: 0.05, topPerSize: 5 } },
  };
}

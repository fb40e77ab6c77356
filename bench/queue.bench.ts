/**
 * Queue mode (`npm run bench queue`, or `npx tsx bench/queue.bench.ts`).
 *
 * 1. Bootstrap, second stage, iid: embedded pool (the API's own piscina pool, sized as on this
 *    machine) vs queue mode with 1 and 2 `keelson worker` processes (concurrency 1 each) on a
 *    Debian redis-server started here on a free loopback port with no persistence. The same chunks
 *    (server/jobs/runner.ts chunkRanges) in every mode; the three results must be identical.
 *    Default size T = 12,000, N = 100, K = 5, 2,000 draws; smaller with BENCH_QUEUE_T, _N, _K, _DRAWS.
 *    Targets: queue overhead ≤ 10 % at 1 worker, speed-up ≥ 1.7× from 1 to 2 workers (needs 2 free cores).
 * 2. Chunk latency through Redis: enqueue → summary done for a 19-draw bootstrap on T = 120, N = 5
 *    (two tiny chunks and a summary), median of 9 after a warm-up.
 * The load average is printed beside the figures: on a shared machine they move with it.
 */
import { performance } from 'node:perf_hooks';
import { availableParallelism, loadavg } from 'node:os';
import { createJobPool, defaultThreadCount } from '../server/jobs/pool';
import { chunkRanges } from '../server/jobs/runner';
import { QueueClient } from '../server/jobs/queue-client';
import type { CheckInput } from '../server/services/jobs-input';
import type { BootstrapBatch, BootstrapInput } from '../lib/gmm/index';
import { mulberry32 } from '../lib/gmm/random';
import { startWorkerProcess, testRedis } from '../tests/queue/redis';

const envInt = (name: string, d: number) => (process.env[name] ? Number(process.env[name]) : d);
const T = envInt('BENCH_QUEUE_T', 12_000);
const N = envInt('BENCH_QUEUE_N', 100);
const K = envInt('BENCH_QUEUE_K', 5);
const DRAWS = envInt('BENCH_QUEUE_DRAWS', 2000);

function makeInput(T: number, N: number, K: number, draws: number, seed: number): Extract<CheckInput, { kind: 'bootstrap' }> {
  const u = mulberry32(seed);
  const z = () => Math.sqrt(-2 * Math.log(u() + 1e-300)) * Math.cos(2 * Math.PI * u());
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

const load = () => loadavg().map((x) => x.toFixed(2)).join(' ');

async function embedded(check: Extract<CheckInput, { kind: 'bootstrap' }>): Promise<{ ms: number; result: unknown }> {
  const pool = createJobPool();
  const ranges = chunkRanges(check.total, 'bootstrap');
  const key = 'bench-embedded';
  const t0 = performance.now();
  const batches: BootstrapBatch[] = new Array(ranges.length);
  let next = 0;
  const lane = async () => {
    while (next < ranges.length) {
      const i = next++;
      batches[i] = await pool.run<BootstrapBatch>({ op: 'bootstrap', key, input: check.input, from: ranges[i][0], to: ranges[i][1] });
    }
  };
  await Promise.all(Array.from({ length: pool.threads + 1 }, lane));
  const result = await pool.run({ op: 'bootstrap-summary', key, input: check.input, batches });
  const ms = performance.now() - t0;
  await pool.destroy();
  return { ms, result };
}

async function viaQueue(q: QueueClient, flow: string, check: Extract<CheckInput, { kind: 'bootstrap' }>): Promise<{ ms: number; result: unknown }> {
  const t0 = performance.now();
  await q.enqueue(flow, check, chunkRanges(check.total, 'bootstrap'), check.total);
  for (;;) {
    const s = await q.state(flow);
    if (s.state === 'completed') {
      const ms = performance.now() - t0;
      await q.remove(flow);
      return { ms, result: s.result };
    }
    if (s.state === 'failed' || s.state === 'missing') throw new Error(`${flow}: ${JSON.stringify(s)}`);
    await new Promise((r) => setTimeout(r, 5));
  }
}

const redis = await testRedis();
const q = new QueueClient(redis.url, { timeoutMs: 60_000 });
const check = makeInput(T, N, K, DRAWS, 42);
console.log(`machine: ${availableParallelism()} threads; embedded pool ${defaultThreadCount()} thread(s); load average ${load()}`);
console.log(`bootstrap ${DRAWS} draws, T = ${T}, N = ${N}, K = ${K}, ${chunkRanges(DRAWS, 'bootstrap').length} chunks`);

const emb = await embedded(check);
console.log(`  embedded pool           ${(emb.ms / 1000).toFixed(2)} s   (load ${load()})`);

const w1 = [await startWorkerProcess(redis.url, { lockMs: 30_000 })];
await viaQueue(q, 'bench-warm', makeInput(120, 5, 2, 19, 1)); // worker threads up
const one = await viaQueue(q, 'bench-1w', check);
console.log(`  queue, 1 worker         ${(one.ms / 1000).toFixed(2)} s   overhead ${((one.ms / emb.ms - 1) * 100).toFixed(1)} % vs embedded (target ≤ 10 %)   (load ${load()})`);
const w2 = [...w1, await startWorkerProcess(redis.url, { lockMs: 30_000 })];
await viaQueue(q, 'bench-warm2', makeInput(120, 5, 2, 40, 1));
const two = await viaQueue(q, 'bench-2w', check);
console.log(`  queue, 2 workers        ${(two.ms / 1000).toFixed(2)} s   speed-up ${(one.ms / two.ms).toFixed(2)}× from 1 to 2 workers (target ≥ 1.7×)   (load ${load()})`);
const same = JSON.stringify(emb.result) === JSON.stringify(one.result) && JSON.stringify(one.result) === JSON.stringify(two.result);
console.log(`  results identical in the three modes: ${same ? 'yes' : 'NO'}`);

const lat: number[] = [];
const tiny = makeInput(120, 5, 2, 19, 3);
for (let i = 0; i < 10; i++) {
  const r = await viaQueue(q, `bench-lat-${i}`, tiny);
  if (i > 0) lat.push(r.ms);
}
lat.sort((a, b) => a - b);
console.log(`chunk latency through Redis (19-draw flow: 2 chunks + summary, enqueue → done): median ${lat[Math.floor(lat.length / 2)].toFixed(1)} ms, max ${lat[lat.length - 1].toFixed(1)} ms   (load ${load()})`);

for (const w of w2) {
  w.proc.kill('SIGTERM');
  await w.exited;
}
await q.close();
await redis.stop();
if (!same) process.exitCode = 1;

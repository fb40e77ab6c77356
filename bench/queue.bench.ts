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
 * 3. Subset sweeps of 20 candidates (1,048,575 models) and 23 (8,388,607), T = 600, N = 25:
 *    embedded pool vs queue mode with 1 and 2 workers, in mask-range chunks (chunkRanges: 8 and 64)
 *    answered as bounded partials (lib/gmm sweepChunk) and merged exactly in the summary; time and
 *    peak RSS (VmHWM of this process for the embedded pool, of each worker process in queue mode).
 *    Every mode is first warmed with three 18-candidate sweeps (two chunks each): a thread's first
 *    sweeps also compile the sweep's code, about 0.1 s once per thread, which a long-lived worker
 *    pays once, not per check. The sweeps poll every 20 ms, and one under two seconds (20
 *    candidates) is timed five times in each mode: the median is printed with the range. Other sizes with BENCH_QUEUE_SWEEP_K (a comma list), _T, _N.
 * BENCH_QUEUE_ONLY=bootstrap|sweep runs one part (peak RSS of this process is monotone: run the sweep
 * alone to read its own).
 * The load average is printed beside the figures: on a shared machine they move with it.
 */
import { performance } from 'node:perf_hooks';
import { availableParallelism, loadavg } from 'node:os';
import { createJobPool, defaultThreadCount, type JobPool } from '../server/jobs/pool';
import type { ChunkTask } from '../server/jobs/tasks';
import { chunkRanges } from '../server/jobs/runner';
import { shareInput } from '../server/jobs/shared-input';
import { QueueClient } from '../server/jobs/queue-client';
import type { CheckInput } from '../server/services/jobs-input';
import type { BootstrapBatch, SweepPartial } from '../lib/gmm/index';
import { bootstrapCheck, sweepCheck } from './queue-checks';
import { readFileSync } from 'node:fs';
import { startWorkerProcess, testRedis, type WorkerProcess } from '../tests/queue/redis';

const envInt = (name: string, d: number) => (process.env[name] ? Number(process.env[name]) : d);
const T = envInt('BENCH_QUEUE_T', 12_000);
const N = envInt('BENCH_QUEUE_N', 100);
const K = envInt('BENCH_QUEUE_K', 5);
const DRAWS = envInt('BENCH_QUEUE_DRAWS', 2000);

const load = () => loadavg().map((x) => x.toFixed(2)).join(' ');

/** Runs one task per range on the pool, threads + 1 in flight (as the embedded runner does), answers in range order. */
async function chunksOnPool<P>(pool: JobPool, ranges: readonly (readonly [number, number])[], task: (range: readonly [number, number]) => ChunkTask): Promise<P[]> {
  const out: P[] = new Array<P>(ranges.length);
  let next = 0;
  const lane = async () => {
    while (next < ranges.length) {
      const i = next++;
      out[i] = await pool.run<P>(task(ranges[i]));
    }
  };
  await Promise.all(Array.from({ length: pool.threads + 1 }, lane));
  return out;
}

async function embedded(check: Extract<CheckInput, { kind: 'bootstrap' }>): Promise<{ ms: number; result: unknown }> {
  const pool = createJobPool();
  const ranges = chunkRanges(check.total, 'bootstrap');
  const key = 'bench-embedded';
  const t0 = performance.now();
  const input = shareInput(check.input); // as the runner does, once per job
  const batches = await chunksOnPool<BootstrapBatch>(pool, ranges, ([from, to]) => ({ op: 'bootstrap', key, input, from, to }));
  const result = await pool.run({ op: 'bootstrap-summary', key, input, batches });
  const ms = performance.now() - t0;
  await pool.destroy();
  return { ms, result };
}

/**
 * Enqueues a flow and polls it to its end. Each poll is several Redis calls, CPU of this process
 * that the workers would otherwise use on a 2-core machine, so the long bootstraps poll every 50 ms
 * (the API follows flows every 250 ms), the sweeps every 20 ms and the tiny latency flows every 5 ms.
 */
async function viaQueue(q: QueueClient, flow: string, check: Extract<CheckInput, { kind: 'bootstrap' | 'subset-sweep' }>, pollMs = 50): Promise<{ ms: number; result: unknown }> {
  const t0 = performance.now();
  await q.enqueue(flow, check, chunkRanges(check.total, check.kind), check.total);
  for (;;) {
    const s = await q.state(flow);
    if (s.state === 'completed') {
      const ms = performance.now() - t0;
      await q.remove(flow);
      return { ms, result: s.result };
    }
    if (s.state === 'failed' || s.state === 'missing') throw new Error(`${flow}: ${JSON.stringify(s)}`);
    await new Promise((r) => setTimeout(r, pollMs));
  }
}

async function bootstrapSection(q: QueueClient, redis: { url: string }): Promise<void> {
  const check = bootstrapCheck(T, N, K, DRAWS, 42);
  console.log(`machine: ${availableParallelism()} threads; embedded pool ${defaultThreadCount()} thread(s); load average ${load()}`);
  console.log(`bootstrap ${DRAWS} draws, T = ${T}, N = ${N}, K = ${K}, ${chunkRanges(DRAWS, 'bootstrap').length} chunks`);

  const emb = await embedded(check);
  console.log(`  embedded pool           ${(emb.ms / 1000).toFixed(2)} s   (load ${load()})`);

  const w1 = [await startWorkerProcess(redis.url, { lockMs: 30_000 })];
  await viaQueue(q, 'bench-warm', bootstrapCheck(120, 5, 2, 19, 1)); // worker threads up
  const one = await viaQueue(q, 'bench-1w', check);
  console.log(`  queue, 1 worker         ${(one.ms / 1000).toFixed(2)} s   overhead ${((one.ms / emb.ms - 1) * 100).toFixed(1)} % vs embedded (target ≤ 10 %)   (load ${load()})`);
  const w2 = [...w1, await startWorkerProcess(redis.url, { lockMs: 30_000 })];
  await viaQueue(q, 'bench-warm2', bootstrapCheck(120, 5, 2, 40, 1));
  const two = await viaQueue(q, 'bench-2w', check);
  console.log(`  queue, 2 workers        ${(two.ms / 1000).toFixed(2)} s   speed-up ${(one.ms / two.ms).toFixed(2)}× from 1 to 2 workers (target ≥ 1.7×)   (load ${load()})`);
  const same = JSON.stringify(emb.result) === JSON.stringify(one.result) && JSON.stringify(one.result) === JSON.stringify(two.result);
  console.log(`  results identical in the three modes: ${same ? 'yes' : 'NO'}`);

  const lat: number[] = [];
  const tiny = bootstrapCheck(120, 5, 2, 19, 3);
  for (let i = 0; i < 10; i++) {
    const r = await viaQueue(q, `bench-lat-${i}`, tiny, 5);
    if (i > 0) lat.push(r.ms);
  }
  lat.sort((a, b) => a - b);
  console.log(`chunk latency through Redis (19-draw flow: 2 chunks + summary, enqueue → done): median ${lat[Math.floor(lat.length / 2)].toFixed(1)} ms, max ${lat[lat.length - 1].toFixed(1)} ms   (load ${load()})`);

  for (const w of w2) {
    w.proc.kill('SIGTERM');
    await w.exited;
  }
  if (!same) process.exitCode = 1;
}

const SWEEP_KS = (process.env.BENCH_QUEUE_SWEEP_K ?? '20,23').split(',').map((v) => {
  const k = Number(v);
  if (!Number.isInteger(k) || k < 2 || k > 25) throw new Error(`BENCH_QUEUE_SWEEP_K: whole numbers from 2 to 25, got ${v}`);
  return k;
});
const SWEEP_T = envInt('BENCH_QUEUE_SWEEP_T', 600);
const SWEEP_N = envInt('BENCH_QUEUE_SWEEP_N', 25);

/** Peak resident set (VmHWM) of a process, in MB; null where /proc is missing. */
function peakRssMb(pid: number | 'self'): number | null {
  try {
    const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? Number(m[1]) / 1024 : null;
  } catch {
    return null;
  }
}
const mb = (v: number | null) => (v === null ? 'n/a' : `${v.toFixed(0)} MB`);

const SWEEP_POLL_MS = 20;
/** Three 18-candidate sweeps of two chunks each: every thread that takes one compiles the sweep's code. */
const sweepWarmups = () => [0, 1, 2].map((i) => sweepCheck(SWEEP_T, SWEEP_N, 18, 5 + i));

async function sweepOnPool(pool: JobPool, key: string, check: Extract<CheckInput, { kind: 'subset-sweep' }>): Promise<{ ms: number; result: unknown }> {
  const ranges = chunkRanges(check.total, 'subset-sweep');
  const t0 = performance.now();
  const input = shareInput(check.input);
  const parts = await chunksOnPool<SweepPartial>(pool, ranges, ([from, to]) => ({ op: 'subset-sweep', key, input, from: from + 1, to: to + 1 }));
  const result = await pool.run({ op: 'subset-sweep-summary', key, input, parts });
  return { ms: performance.now() - t0, result };
}

async function sweepSection(q: QueueClient, redis: { url: string }, K: number): Promise<void> {
  const check = sweepCheck(SWEEP_T, SWEEP_N, K, 77);
  const rssBefore = peakRssMb('self');
  console.log(`subset sweep, ${K} candidates (${check.total.toLocaleString('en-US')} models), T = ${SWEEP_T}, N = ${SWEEP_N}, ${chunkRanges(check.total, 'subset-sweep').length} chunks; load average ${load()}`);
  // a sweep under two seconds is timed five times (median, and the range)
  const reps = check.total < 2 ** 21 ? 5 : 1;
  const timed = async (run: (rep: number) => Promise<{ ms: number; result: unknown }>) => {
    const runs: { ms: number; result: unknown }[] = [];
    for (let r = 0; r < reps; r++) runs.push(await run(r));
    const ms = runs.map((x) => x.ms).sort((a, b) => a - b);
    const same = runs.every((x) => JSON.stringify(x.result) === JSON.stringify(runs[0].result));
    return { ms: ms[(reps - 1) >> 1], range: reps > 1 ? ` (${reps} runs: ${(ms[0] / 1000).toFixed(2)}–${(ms[reps - 1] / 1000).toFixed(2)} s)` : '', result: same ? runs[0].result : null };
  };
  const pool = createJobPool();
  for (const [i, w] of sweepWarmups().entries()) await sweepOnPool(pool, `bench-sweep-warm-${K}-${i}`, w);
  const emb = await timed((r) => sweepOnPool(pool, `bench-sweep-embedded-${K}-${r}`, check));
  await pool.destroy();
  console.log(`  embedded pool           ${(emb.ms / 1000).toFixed(2)} s${emb.range}   ${((emb.ms * 1000) / check.total).toFixed(2)} µs/model wall   peak RSS of this process ${mb(peakRssMb('self'))} (before: ${mb(rssBefore)})   (load ${load()})`);
  const warm = async (tag: string) => {
    for (const [i, w] of sweepWarmups().entries()) await viaQueue(q, `bench-sweep-warm-${tag}-${K}-${i}`, w, SWEEP_POLL_MS);
  };
  const workers: WorkerProcess[] = [await startWorkerProcess(redis.url, { lockMs: 30_000 })];
  await warm('1w');
  const one = await timed((r) => viaQueue(q, `bench-sweep-1w-${K}-${r}`, check, SWEEP_POLL_MS));
  console.log(`  queue, 1 worker         ${(one.ms / 1000).toFixed(2)} s${one.range}   overhead ${((one.ms / emb.ms - 1) * 100).toFixed(1)} % vs embedded   worker peak RSS ${mb(peakRssMb(workers[0].proc.pid!))}   (load ${load()})`);
  workers.push(await startWorkerProcess(redis.url, { lockMs: 30_000 }));
  await warm('2w');
  const two = await timed((r) => viaQueue(q, `bench-sweep-2w-${K}-${r}`, check, SWEEP_POLL_MS));
  console.log(`  queue, 2 workers        ${(two.ms / 1000).toFixed(2)} s${two.range}   speed-up ${(one.ms / two.ms).toFixed(2)}× from 1 to 2 workers   worker peak RSS ${workers.map((w) => mb(peakRssMb(w.proc.pid!))).join(', ')}   (load ${load()})`);
  const same = emb.result !== null && JSON.stringify(emb.result) === JSON.stringify(one.result) && JSON.stringify(one.result) === JSON.stringify(two.result);
  console.log(`  results identical in the three modes${reps > 1 ? ' and every run' : ''}: ${same ? 'yes' : 'NO'}`);
  for (const w of workers) {
    w.proc.kill('SIGTERM');
    await w.exited;
  }
  if (!same) process.exitCode = 1;
}

const ONLY = process.env.BENCH_QUEUE_ONLY;
const redis = await testRedis();
const q = new QueueClient(redis.url, { timeoutMs: 60_000 });
if (ONLY !== 'sweep') await bootstrapSection(q, redis);
if (ONLY !== 'bootstrap') for (const k of SWEEP_KS) await sweepSection(q, redis, k);
await q.close();
await redis.stop();

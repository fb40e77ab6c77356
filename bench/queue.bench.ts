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
 *    For reference, a fourth mode runs the same chunks on two pool threads of one process with no
 *    queue (bench/sweep-threads-child.ts, started with --single-threaded-gc as a worker is): what
 *    two threads give on the machine. On a 2-vCPU Linux machine with taskset, the 1-worker mode
 *    also runs with its pool thread pinned to vCPU 0 and to vCPU 1 (see Mode below: this VM's
 *    vCPUs differ in speed), giving the speed-up from one worker on a vCPU of the mean speed and
 *    the ceiling of the unpinned ratio. The modes are up at once (the 1-worker
 *    mode's worker on Redis database 1, the two workers on database 2) and take turns in every
 *    round, the order rotating: 9 rounds for 20
 *    candidates, 3 for 23. The medians are printed with the ranges, and the per-round ratios.
 *    Every mode is first warmed with three 18-candidate sweeps (two chunks each): a thread's first
 *    sweeps also compile the sweep's code, about 0.1 s once per thread, which a long-lived worker
 *    pays once, not per check. Other sizes with BENCH_QUEUE_SWEEP_K (a comma list), _T, _N.
 * BENCH_QUEUE_ONLY=bootstrap|sweep runs one part (peak RSS of this process is monotone: run the sweep
 * alone to read its own).
 * The load average is printed beside the figures: on a shared machine they move with it.
 */
import { performance } from 'node:perf_hooks';
import { availableParallelism, loadavg } from 'node:os';
import { createJobPool, defaultThreadCount } from '../server/jobs/pool';
import { chunkRanges } from '../server/jobs/runner';
import { shareInput } from '../server/jobs/shared-input';
import { QueueClient } from '../server/jobs/queue-client';
import type { CheckInput } from '../server/services/jobs-input';
import type { BootstrapBatch } from '../lib/gmm/index';
import { bootstrapCheck, sweepCheck } from './queue-checks';
import { readdirSync, readFileSync } from 'node:fs';
import { execFileSync, fork } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { decode } from '../server/jobs/queue-shared';
import { chunksOnPool, sweepOnPool } from './pool-runs';
import { startWorkerProcess, testRedis, type WorkerProcess } from '../tests/queue/redis';
import { median } from './median';

const envInt = (name: string, d: number) => (process.env[name] ? Number(process.env[name]) : d);
const T = envInt('BENCH_QUEUE_T', 12_000);
const N = envInt('BENCH_QUEUE_N', 100);
const K = envInt('BENCH_QUEUE_K', 5);
const DRAWS = envInt('BENCH_QUEUE_DRAWS', 2000);

const load = () => loadavg().map((x) => x.toFixed(2)).join(' ');

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
 * Enqueues a flow and follows it to its end as the API does (server/jobs/runner.ts): a read of its
 * state every 250 ms, woken at once by BullMQ's 'completed' event of the summary (QueueClient.pause),
 * so the time is enqueue → summary done plus one state read, and no polling takes CPU from the workers.
 */
async function viaQueue(q: QueueClient, flow: string, check: Extract<CheckInput, { kind: 'bootstrap' | 'subset-sweep' }>): Promise<{ ms: number; result: unknown }> {
  const never = new AbortController().signal;
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
    await q.pause(flow, 250, never);
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
    const r = await viaQueue(q, `bench-lat-${i}`, tiny);
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

/** Three 18-candidate sweeps of two chunks each: every thread that takes one compiles the sweep's code. */
const sweepWarmups = () => [0, 1, 2].map((i) => sweepCheck(SWEEP_T, SWEEP_N, 18, 5 + i));

/** The no-queue reference process (bench/sweep-threads-child.ts). */
async function startReference(): Promise<{ sweep: (key: string, K: number, seed: number) => Promise<{ ms: number; result: unknown }>; stop: () => Promise<void> }> {
  const child = fork(fileURLToPath(new URL('./sweep-threads-child.ts', import.meta.url)), [], { execArgv: ['--single-threaded-gc', '--import', 'tsx'], stdio: ['ignore', 'inherit', 'inherit', 'ipc'] });
  const waiting = new Map<string, (v: { ms: number; result: unknown }) => void>();
  child.on('message', (m: 'ready' | { key: string; ms: number; result: string }) => {
    if (m !== 'ready') waiting.get(m.key)?.({ ms: m.ms, result: decode(m.result) });
  });
  await new Promise<void>((resolve, reject) => {
    child.once('message', () => resolve());
    child.once('exit', (code) => reject(new Error(`the reference process exited ${code}`)));
  });
  return {
    sweep: (key, K, seed) =>
      new Promise((resolve) => {
        waiting.set(key, resolve);
        child.send({ key, T: SWEEP_T, N: SWEEP_N, K, seed });
      }),
    stop: async () => {
      const exited = new Promise((r) => child.once('exit', r));
      child.send('stop');
      await exited;
    },
  };
}

/** The same Redis, logical database `db` (one per queue mode, so each mode has its own workers). */
const onDb = (url: string, db: number) => `${url.replace(/\/\d*$/, '')}/${db}`;

/**
 * This VM's two vCPUs are not alike, and which one is slower changes over minutes: one sweep chunk
 * pinned (taskset) to one vCPU at a time took 115–125 ms on vCPU 0 and 81 ms on vCPU 1 on
 * 4 December, later 79–83 ms on vCPU 0 and 120–123 ms on vCPU 1, once 79 and 82 ms; running on
 * both at once changed neither figure (the host gives one vCPU less time; /proc/stat shows no
 * steal column). One worker then runs at the speed of whichever vCPU its pool thread is on, and
 * 1 → 2 workers cannot exceed 1 + slow/fast (1.67× at 81 and 121 ms) when that is the fast one.
 * So the 1-worker mode also runs with its pool thread pinned to each vCPU in turn: the harmonic
 * mean of those two times is one worker on a vCPU of the machine's mean speed, against which two
 * workers would ideally give 2×.
 */
type Mode = 'embedded' | '1w' | '1w@0' | '1w@1' | '2w' | 'threads2';
const BASE_MODES: readonly Mode[] = ['embedded', '1w', '2w', 'threads2'];

/** The busiest thread of a process other than its main thread (a 1-thread worker's pool thread, once warm). */
function busiestThread(pid: number): number {
  let best = { tid: 0, ticks: -1 };
  for (const tid of readdirSync(`/proc/${pid}/task`).map(Number)) {
    if (tid === pid) continue;
    const st = readFileSync(`/proc/${pid}/task/${tid}/stat`, 'utf8');
    const f = st.slice(st.lastIndexOf(')') + 2).split(' ');
    const ticks = Number(f[11]) + Number(f[12]);
    if (ticks > best.ticks) best = { tid, ticks };
  }
  return best.tid;
}

/** Pins thread `tid` to vCPU `cpu`, or lets it run on every vCPU again (null). */
const pin = (tid: number, cpu: number | null) => execFileSync('taskset', ['-pc', cpu === null ? `0-${availableParallelism() - 1}` : String(cpu), String(tid)], { stdio: 'ignore' });

/** Pinned modes need two vCPUs, Linux's /proc and util-linux's taskset. */
function canPin(): boolean {
  if (availableParallelism() !== 2) return false;
  try {
    execFileSync('taskset', ['-p', String(process.pid)], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

async function sweepSection(redis: { url: string }, K: number): Promise<void> {
  const check = sweepCheck(SWEEP_T, SWEEP_N, K, 77);
  const rssBefore = peakRssMb('self');
  // under two seconds (20 candidates): nine rounds; larger: three
  const rounds = check.total < 2 ** 21 ? 9 : 3;
  console.log(`subset sweep, ${K} candidates (${check.total.toLocaleString('en-US')} models), T = ${SWEEP_T}, N = ${SWEEP_N}, ${chunkRanges(check.total, 'subset-sweep').length} chunks, ${rounds} rounds of the modes in turn; load average ${load()}`);
  // the modes are up at once, each warm, and take turns within every round (the order
  // rotating), so each round's times share the machine's state: on this shared 2-core
  // machine a chunk takes 80 ms for minutes and then 115 ms for minutes, and modes timed one after
  // the other compared different phases (1.30× to 1.66× from 1 to 2 workers on one boot)
  const pool = createJobPool();
  // reference: the same chunks on two pool threads of one process, no queue at all, in a child
  // started with --single-threaded-gc as a worker is (this process has V8's GC helper threads)
  const ref = await startReference();
  const q1 = new QueueClient(onDb(redis.url, 1), { timeoutMs: 60_000 });
  const q2 = new QueueClient(onDb(redis.url, 2), { timeoutMs: 60_000 });
  const one: WorkerProcess[] = [await startWorkerProcess(onDb(redis.url, 1), { lockMs: 30_000 })];
  const two: WorkerProcess[] = [await startWorkerProcess(onDb(redis.url, 2), { lockMs: 30_000 }), await startWorkerProcess(onDb(redis.url, 2), { lockMs: 30_000 })];
  for (const [i, w] of sweepWarmups().entries()) {
    await sweepOnPool(pool, `bench-sweep-warm-${K}-${i}`, w);
    await ref.sweep(`bench-sweep-warm-t2-${K}-${i}`, 18, 5 + i);
    await viaQueue(q1, `bench-sweep-warm-1w-${K}-${i}`, w);
    await viaQueue(q2, `bench-sweep-warm-2w-${K}-${i}`, w);
  }
  const pinned = canPin();
  const MODES: readonly Mode[] = pinned ? [...BASE_MODES, '1w@0', '1w@1'] : BASE_MODES;
  const poolThread = pinned ? busiestThread(one[0].proc.pid!) : 0;
  const runs: Record<Mode, { ms: number; result: unknown }[]> = { embedded: [], '1w': [], '1w@0': [], '1w@1': [], '2w': [], threads2: [] };
  for (let r = 0; r < rounds; r++) {
    for (let j = 0; j < MODES.length; j++) {
      const mode = MODES[(r + j) % MODES.length];
      const flow = `bench-sweep-${mode}-${K}-${r}`;
      if (mode === '1w@0' || mode === '1w@1') pin(poolThread, mode === '1w@0' ? 0 : 1);
      runs[mode].push(mode === 'embedded' ? await sweepOnPool(pool, flow, check) : mode === 'threads2' ? await ref.sweep(flow, K, 77) : await viaQueue(mode === '2w' ? q2 : q1, flow, check));
      if (mode === '1w@0' || mode === '1w@1') pin(poolThread, null);
    }
  }
  const ms = (m: Mode) => runs[m].map((x) => x.ms);
  const sec = (x: number) => (x / 1000).toFixed(2);
  const fig = (m: Mode) => `${sec(median(ms(m)))} s (${sec(Math.min(...ms(m)))}–${sec(Math.max(...ms(m)))} s)`;
  const ratios = (a: Mode, b: Mode) => runs[a].map((x, r) => x.ms / runs[b][r].ms);
  const overhead = ratios('1w', 'embedded').map((x) => (x - 1) * 100);
  const speedUp = ratios('1w', '2w');
  console.log(`  embedded pool           ${fig('embedded')}   ${((median(ms('embedded')) * 1000) / check.total).toFixed(2)} µs/model wall   peak RSS of this process ${mb(peakRssMb('self'))} (before: ${mb(rssBefore)})`);
  console.log(`  queue, 1 worker         ${fig('1w')}   overhead ${((median(ms('1w')) / median(ms('embedded')) - 1) * 100).toFixed(1)} % vs embedded (medians; per round ${overhead.map((x) => x.toFixed(0)).join(', ')} %, median ${median(overhead).toFixed(1)} %)   worker peak RSS ${mb(peakRssMb(one[0].proc.pid!))}`);
  console.log(`  queue, 2 workers        ${fig('2w')}   speed-up ${(median(ms('1w')) / median(ms('2w'))).toFixed(2)}× from 1 to 2 workers (medians; per round ${speedUp.map((x) => x.toFixed(2)).join(', ')}×, median ${median(speedUp).toFixed(2)}×)   worker peak RSS ${two.map((w) => mb(peakRssMb(w.proc.pid!))).join(', ')}   (load ${load()})`);
  const refUp = ratios('embedded', 'threads2');
  if (pinned) {
    // one worker on a vCPU of the mean speed: the harmonic mean of the two pinned times
    const mean1 = runs['1w@0'].map((x, r) => (2 * x.ms * runs['1w@1'][r].ms) / (x.ms + runs['1w@1'][r].ms));
    const asym = ratios('1w@0', '1w@1');
    const upMean = mean1.map((x, r) => x / runs['2w'][r].ms);
    const ceiling = runs['1w'].map((x, r) => x.ms / (mean1[r] / 2));
    console.log(`  queue, 1 worker pinned  vCPU 0 ${fig('1w@0')}, vCPU 1 ${fig('1w@1')}   vCPU 0 / vCPU 1 per round ${asym.map((x) => x.toFixed(2)).join(', ')}`);
    console.log(`  speed-up from 1 worker on a vCPU of the mean speed to 2 workers (ideal 2×): per round ${upMean.map((x) => x.toFixed(2)).join(', ')}×, median ${median(upMean).toFixed(2)}×`);
    console.log(`  ceiling of the unpinned 1 → 2 ratio with no queue cost at all (1 worker's time / half the mean-speed time): per round ${ceiling.map((x) => x.toFixed(2)).join(', ')}×, median ${median(ceiling).toFixed(2)}×; measured/ceiling median ${median(speedUp.map((x, r) => x / ceiling[r])).toFixed(2)}`);
  } else console.log(`  (no pinned 1-worker modes: they need exactly 2 vCPUs and util-linux taskset; this machine has ${availableParallelism()})`);
  console.log(`  reference: 2 pool threads in one process, no queue   ${fig('threads2')}   ${(median(ms('embedded')) / median(ms('threads2'))).toFixed(2)}× against the embedded pool's 1 thread (medians; per round ${refUp.map((x) => x.toFixed(2)).join(', ')}×, median ${median(refUp).toFixed(2)}×): what two threads give on this machine without Redis`);
  const first = JSON.stringify(runs.embedded[0].result);
  const same = MODES.every((m) => runs[m].every((x) => JSON.stringify(x.result) === first));
  console.log(`  results identical in the ${MODES.length} modes and every round: ${same ? 'yes' : 'NO'}`);
  await pool.destroy();
  await ref.stop();
  for (const w of [...one, ...two]) {
    w.proc.kill('SIGTERM');
    await w.exited;
  }
  await q1.close();
  await q2.close();
  if (!same) process.exitCode = 1;
}

const ONLY = process.env.BENCH_QUEUE_ONLY;
const redis = await testRedis();
const q = new QueueClient(redis.url, { timeoutMs: 60_000 });
if (ONLY !== 'sweep') await bootstrapSection(q, redis);
if (ONLY !== 'bootstrap') for (const k of SWEEP_KS) await sweepSection(redis, k);
await q.close();
await redis.stop();

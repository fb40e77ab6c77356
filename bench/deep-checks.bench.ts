/**
 * Deep checks (`npm run bench deep`, or `npx tsx bench/deep-checks.bench.ts`).
 *
 * 1. Subset sweep, 12 candidates (4,095 models), N = 25, T = 600: in process (one thread) and as
 *    chunks through the worker pool (1 thread = the pool size on a 2-core machine, and 2 threads).
 *    Target ≤ 1 s.
 * 2. Bootstrap, 999 draws, N = 25, K = 3, T = 600, second stage: same three ways. Target ≤ 2 s.
 * 3. API latency while deep checks run: a real server on 127.0.0.1 (demo library, a finished run),
 *    autocannon with 20 connections for 8 s against GET /api/v1/runs/:id and /api/v1/jobs/:id,
 *    from a child process; p50/p95/p99 from every response time. Scenarios: idle; while the worker
 *    pool runs a long bootstrap and back-to-back subset sweeps; and, for contrast, the same bootstrap
 *    computed on the API's own thread in 25-draw slices (what the server would do without workers).
 *    Target p95 ≤ 50 ms with workers.
 * Seeded invented data; medians of 5 timed repetitions after one warm-up.
 */
import { okOf } from './ok-of';
import { spawn } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { performance } from 'node:perf_hooks';
import { availableParallelism } from 'node:os';
import type { AddressInfo } from 'node:net';
import {
  prepareBootstrap,
  prepareSubsetSweep,
  runBootstrapDraws,
  summariseBootstrap,
  summariseSubsetSweep,
  sweepChunk,
  type BootstrapBatch,
  type BootstrapInput,
  type SubsetSweepInput,
  type SweepPartial,
} from '../lib/gmm/index';
import { createJobPool, defaultThreadCount, type JobPool } from '../server/jobs/pool';
import { shareInput } from '../server/jobs/shared-input';
import { openDb } from '../server/db/client';
import { createApp } from '../server/app';
import { createMailer } from '../server/services/mailer';
import { seedDemoUsers } from '../server/seed/users';
import { signInOverHttp } from './http-sign-in';
import { seedDemoLibraries } from '../server/seed/demo-libraries';
import { benchEconomy } from './economy';

const makeData = benchEconomy;

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
async function time(fn: () => unknown | Promise<unknown>, reps = 5): Promise<number> {
  await fn();
  const ms: number[] = [];
  for (let i = 0; i < reps; i++) {
    const t0 = performance.now();
    await fn();
    ms.push(performance.now() - t0);
  }
  return median(ms);
}

function ranges(total: number, chunks: number, offset = 0): [number, number][] {
  const size = Math.ceil(total / chunks);
  const out: [number, number][] = [];
  for (let a = 0; a < total; a += size) out.push([a + offset, Math.min(total, a + size) + offset]);
  return out;
}

async function sweepOnPool(pool: JobPool, plain: SubsetSweepInput, key: string) {
  const input = shareInput(plain); // as the runner does, once per job
  const parts = await Promise.all(ranges(4095, 32, 1).map(([from, to]) => pool.run<SweepPartial>({ op: 'subset-sweep', key, input, from, to })));
  return pool.run({ op: 'subset-sweep-summary', key, input, parts });
}
async function bootstrapOnPool(pool: JobPool, plain: BootstrapInput, key: string, draws: number) {
  const input = shareInput(plain);
  const batches = await Promise.all(ranges(draws, 40).map(([from, to]) => pool.run<BootstrapBatch>({ op: 'bootstrap', key, input, from, to })));
  return pool.run({ op: 'bootstrap-summary', key, input, batches });
}

console.log(`cores: ${availableParallelism()}, default pool size: ${defaultThreadCount()}`);

// ---- 1 and 2: compute timings ----
const sweepData = makeData(600, 25, 12, 1);
const sweepInput: SubsetSweepInput = {
  returns: sweepData.returns,
  factors: sweepData.factors,
  factorNames: Array.from({ length: 12 }, (_, k) => `C${k + 1}`),
  options: { lags: 'auto', form: 'centred', factorMeansKnown: false, weighting: 'identity' },
};
const bootData = makeData(600, 25, 3, 2);
const bootInput: BootstrapInput = {
  returns: bootData.returns,
  factors: bootData.factors,
  factorNames: ['X1', 'X2', 'X3'],
  options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 999, seed: 7 },
};

/** Median process CPU time (user + system, ms) of `fn`: the compute cost, less sensitive to other load than wall time. */
async function cpuTime(fn: () => unknown, reps = 3): Promise<number> {
  const ms: number[] = [];
  for (let i = 0; i < reps; i++) {
    const c0 = process.cpuUsage();
    await fn();
    const c = process.cpuUsage(c0);
    ms.push((c.user + c.system) / 1000);
  }
  return median(ms);
}
const loadAvg = () => (existsSync('/proc/loadavg') ? readFileSync('/proc/loadavg', 'utf8').split(' ').slice(0, 3).join(' ') : 'n/a');
console.log(`load average at start: ${loadAvg()}`);

const sweepInProcess = await time(() => {
  const plan = okOf(prepareSubsetSweep(sweepInput)).plan;
  return summariseSubsetSweep(plan, sweepChunk(plan, 1, 4096));
});
const bootInProcess = await time(() => {
  const plan = okOf(prepareBootstrap(bootInput)).plan;
  return summariseBootstrap(plan, bootInput, [runBootstrapDraws(plan, bootInput.options, 0, 999)]);
}, 3);
const sweepCpu = await cpuTime(() => {
  const plan = okOf(prepareSubsetSweep(sweepInput)).plan;
  return summariseSubsetSweep(plan, sweepChunk(plan, 1, 4096));
});
const bootCpu = await cpuTime(() => {
  const plan = okOf(prepareBootstrap(bootInput)).plan;
  return summariseBootstrap(plan, bootInput, [runBootstrapDraws(plan, bootInput.options, 0, 999)]);
});
let k = 0;
const results: Record<string, { sweep: number; boot: number }> = {};
for (const threads of [1, 2]) {
  const pool = createJobPool({ threads });
  await pool.run({ op: 'ping' });
  const sweep = await time(() => sweepOnPool(pool, sweepInput, `s${k++}`));
  const boot = await time(() => bootstrapOnPool(pool, bootInput, `b${k++}`, 999), 3);
  results[threads] = { sweep, boot };
  await pool.destroy();
}
const row = (label: string, ms: number, target: number) => console.log(`${label.padEnd(58)} ${ms.toFixed(0).padStart(6)} ms   ${ms <= target ? 'within' : 'OVER'} target ${target} ms`);
row('subset sweep 12 candidates (4,095 models), in process', sweepInProcess, 1000);
row('subset sweep 12 candidates, worker pool, 1 thread', results[1].sweep, 1000);
row('subset sweep 12 candidates, worker pool, 2 threads', results[2].sweep, 1000);
row('bootstrap 999 draws N=25 K=3 T=600, in process', bootInProcess, 2000);
row('bootstrap 999 draws, worker pool, 1 thread', results[1].boot, 2000);
row('bootstrap 999 draws, worker pool, 2 threads', results[2].boot, 2000);
console.log(`CPU time in process (user + system): sweep ${sweepCpu.toFixed(0)} ms, bootstrap ${bootCpu.toFixed(0)} ms`);
console.log(`speed-up of 2 worker threads over one thread in process: sweep ×${(sweepInProcess / results[2].sweep).toFixed(2)}, bootstrap ×${(bootInProcess / results[2].boot).toFixed(2)}`);

// ---- 3: API latency under load ----
const db = openDb(':memory:');
await seedDemoUsers(db);
seedDemoLibraries(db);
const mailer = await createMailer();
const pool = createJobPool();
const app = createApp({ db, mailer, sessionSecret: 'bench-secret-bench-secret', jobPool: pool });
const server = app.listen(0, '127.0.0.1');
await new Promise((r) => server.once('listening', r));
const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}/api/v1`;

const s = await signInOverHttp(base);
const call = async (path: string, body?: unknown) => {
  const r = await fetch(`${base}${path}`, {
    method: body ? 'POST' : 'GET',
    headers: { 'content-type': 'application/json', cookie: s.cookie, 'x-csrf-token': s.csrf },
    body: body ? JSON.stringify(body) : undefined,
  });
  const json = (await r.json()) as Record<string, any>; // eslint-disable-line @typescript-eslint/no-explicit-any
  if (r.status >= 300) throw new Error(`${path}: ${r.status} ${JSON.stringify(json).slice(0, 300)}`);
  return json;
};
const ed = db.$client
  .prepare("select e.id as id from library_editions e join libraries l on l.id = e.library_id where l.name like 'Harbour market%' order by e.number limit 1")
  .get() as { id: number };
const series = db.$client.prepare('select name, kind from library_series where edition_id = ? order by position').all(ed.id) as { name: string; kind: string }[];
const assets = series.filter((x) => x.kind === 'asset').map((x) => x.name);
const factors = series.filter((x) => x.kind === 'factor').map((x) => x.name);
const run = (
  await call('/runs', {
    editionId: ed.id,
    spec: { assets, factors, nonTraded: factors.filter((f) => f === 'GALE'), stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, level: 0.05, rf: 'RF' },
  })
).run;
const firstJob = (await call(`/runs/${run.id}/checks`, { kind: 'subset-sweep', params: {} })).job;
console.log(`demo run ${run.id}: N = ${assets.length}, K = ${factors.length}, T = 600`);

const LOADER = `
import autocannon from 'autocannon';
const [url, cookie, seconds] = process.argv.slice(1);
const times = [];
const inst = autocannon({ url, connections: 20, duration: Number(seconds), headers: { cookie } });
inst.on('response', (_c, status, _b, ms) => { if (status === 200) times.push(ms); });
const r = await inst;
times.sort((a, b) => a - b);
const q = (p) => times[Math.min(times.length - 1, Math.floor(p * times.length))];
console.log(JSON.stringify({ n: times.length, non2xx: r.non2xx, errors: r.errors, p50: q(0.5), p95: q(0.95), p99: q(0.99), rps: r.requests.average }));
`;
function load(path: string, seconds = 8): Promise<{ n: number; non2xx: number; errors: number; p50: number; p95: number; p99: number; rps: number }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ['--input-type=module', '-e', LOADER, `${base}${path}`, s.cookie, String(seconds)], { stdio: ['ignore', 'pipe', 'inherit'] });
    let out = '';
    child.stdout.on('data', (d) => (out += d));
    child.on('exit', (code) => (code === 0 ? resolve(JSON.parse(out.trim().split('\n').pop()!)) : reject(new Error(`loader exit ${code}`))));
  });
}
const report = (label: string, r: Awaited<ReturnType<typeof load>>) =>
  console.log(
    `${label.padEnd(64)} p50 ${r.p50.toFixed(1).padStart(6)} ms  p95 ${r.p95.toFixed(1).padStart(6)} ms  p99 ${r.p99.toFixed(1).padStart(6)} ms  ${Math.round(r.rps)} req/s  (n = ${r.n}${r.non2xx ? `, non-2xx ${r.non2xx}` : ''})  ${r.p95 <= 50 ? 'within' : 'OVER'} 50 ms`,
  );

console.log(`load average before the API runs: ${loadAvg()}`);
report('idle: GET /runs/:id', await load(`/runs/${run.id}`));

// Keep the pool busy for the whole window: a long bootstrap plus back-to-back subset sweeps.
const bootJob = (await call(`/runs/${run.id}/checks`, { kind: 'bootstrap', params: { draws: 40_000, seed: 3 } })).job;
let sweeping = true;
let sweeps = 0;
const sweepLoop = (async () => {
  while (sweeping) {
    const j = (await call(`/runs/${run.id}/checks`, { kind: 'subset-sweep', params: {} })).job;
    for (;;) {
      const cur = (await call(`/jobs/${j.id}`)).job;
      if (!['queued', 'running'].includes(cur.status)) break;
      await new Promise((r) => setTimeout(r, 100));
    }
    sweeps += 1;
  }
})();
await new Promise((r) => setTimeout(r, 300));
report('with workers busy (bootstrap 40k draws + sweeps): GET /runs/:id', await load(`/runs/${run.id}`));
report('with workers busy: GET /jobs/:id (the running bootstrap)', await load(`/jobs/${bootJob.id}`));
const progress = (await call(`/jobs/${bootJob.id}`)).job;
console.log(`  meanwhile: bootstrap at ${progress.done} / ${progress.total} draws, ${sweeps} subset sweeps finished`);
sweeping = false;
await call(`/jobs/${bootJob.id}/cancel`, {});
await sweepLoop;

// Contrast: the same bootstrap on the API's own thread, 25 draws per slice, yielding between slices.
const plan = okOf(prepareBootstrap(bootInput)).plan;
let computing = true;
let draws = 0;
const inline = (async () => {
  while (computing) {
    runBootstrapDraws(plan, bootInput.options, draws, draws + 25);
    draws += 25;
    await new Promise((r) => setImmediate(r));
  }
})();
report('no workers (bootstrap on the API thread, 25-draw slices): GET /runs/:id', await load(`/runs/${run.id}`));
computing = false;
await inline;
console.log(`  (first sweep job ${firstJob.id} on the demo run: ${(await call(`/jobs/${firstJob.id}`)).job.status})`);

server.close();
app.close();
await app.jobRunner.close();
await pool.destroy();
await mailer.close();
process.exit(0);

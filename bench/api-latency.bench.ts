/**
 * API latency at 50 connections (`npm run bench api-latency`, or `npx tsx bench/api-latency.bench.ts`).
 *
 * A real server on 127.0.0.1 with the demo accounts and libraries and one finished run; autocannon
 * with 50 connections for 6 s (from a child process) against GET /api/v1/runs/:id and
 * GET /api/v1/libraries, p50/p95/p99 from every response. Idle, then while a bootstrap runs in the
 * deep-check pool. Targets: /runs/:id p95 ≤ 50 ms, /libraries p95 ≤ 60 ms. The load average is
 * printed beside each line: on a shared machine the figures move with it.
 */
import { spawn } from 'node:child_process';
import { loadavg } from 'node:os';
import type { AddressInfo } from 'node:net';
import { openDb } from '../server/db/client';
import { createApp } from '../server/app';
import { createMailer } from '../server/services/mailer';
import { createJobPool } from '../server/jobs/pool';
import { signInOverHttp } from './http-sign-in';
import { seedDemoUsers } from '../server/seed/users';
import { seedDemoLibraries } from '../server/seed/demo-libraries';

const SECONDS = Number(process.env.BENCH_API_SECONDS ?? 6);
const loadAvg = () => loadavg().map((x) => x.toFixed(2)).join(' ');
const db = openDb(':memory:');
await seedDemoUsers(db);
seedDemoLibraries(db);
const mailer = await createMailer();
const pool = createJobPool();
const app = createApp({ db, mailer, sessionSecret: 'bench-secret-bench-secret', jobPool: pool });
const server = app.listen(0, '127.0.0.1');
await new Promise((r) => server.once('listening', r));
const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}/api/v1`;

const { cookie, csrf } = await signInOverHttp(base);
async function call(path: string, body?: unknown): Promise<Record<string, any>> { // eslint-disable-line @typescript-eslint/no-explicit-any
  const r = await fetch(`${base}${path}`, { method: body ? 'POST' : 'GET', headers: { 'content-type': 'application/json', cookie, 'x-csrf-token': csrf }, body: body ? JSON.stringify(body) : undefined });
  const json = (await r.json()) as Record<string, any>; // eslint-disable-line @typescript-eslint/no-explicit-any
  if (r.status >= 300) throw new Error(`${path}: ${r.status} ${JSON.stringify(json).slice(0, 300)}`);
  return json;
}
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

const LOADER = `
import autocannon from 'autocannon';
const [url, cookie, seconds] = process.argv.slice(1);
const times = [];
const inst = autocannon({ url, connections: 50, duration: Number(seconds), headers: { cookie } });
inst.on('response', (_c, status, _b, ms) => { if (status === 200) times.push(ms); });
const r = await inst;
times.sort((a, b) => a - b);
const q = (p) => times[Math.min(times.length - 1, Math.floor(p * times.length))];
console.log(JSON.stringify({ n: times.length, non2xx: r.non2xx, p50: q(0.5), p95: q(0.95), p99: q(0.99), rps: r.requests.average }));
`;
type Load = { n: number; non2xx: number; p50: number; p95: number; p99: number; rps: number };
function load(path: string): Promise<Load> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ['--input-type=module', '-e', LOADER, `${base}${path}`, cookie, String(SECONDS)], { stdio: ['ignore', 'pipe', 'inherit'] });
    let out = '';
    child.stdout.on('data', (d) => (out += d));
    child.on('exit', (code) => (code === 0 ? resolve(JSON.parse(out.trim().split('\n').pop()!) as Load) : reject(new Error(`loader exit ${code}`))));
  });
}
const report = (label: string, r: Load, target: number) =>
  console.log(
    `${label.padEnd(52)} p50 ${r.p50.toFixed(1).padStart(6)} ms  p95 ${r.p95.toFixed(1).padStart(6)} ms  p99 ${r.p99.toFixed(1).padStart(6)} ms  ${Math.round(r.rps)} req/s  (n = ${r.n}${r.non2xx ? `, non-2xx ${r.non2xx}` : ''})  ${r.p95 <= target ? 'within' : 'OVER'} ${target} ms  load ${loadAvg()}`,
  );

console.log(`demo run ${run.id}: N = ${assets.length}, K = ${factors.length}; 50 connections, ${SECONDS} s each; load average ${loadAvg()}`);
report('idle: GET /runs/:id', await load(`/runs/${run.id}`), 50);
report('idle: GET /libraries', await load('/libraries'), 60);
const boot = (await call(`/runs/${run.id}/checks`, { kind: 'bootstrap', params: { draws: 100_000, seed: 3 } })).job;
await new Promise((r) => setTimeout(r, 300));
report('deep check running: GET /runs/:id', await load(`/runs/${run.id}`), 50);
report('deep check running: GET /libraries', await load('/libraries'), 60);
const prog = (await call(`/jobs/${boot.id}`)).job;
console.log(`  meanwhile the bootstrap reached ${prog.done} / ${prog.total} draws`);
await call(`/jobs/${boot.id}/cancel`, {});
await app.jobRunner.close();
server.close();
app.close();
await pool.destroy();
await mailer.close();

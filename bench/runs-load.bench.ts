/**
 * 250 POST /runs from 50 clients (`npm run bench runs-load`, or `npx tsx bench/runs-load.bench.ts`).
 *
 * A real server on 127.0.0.1 (in this process, embedded pool) with the demo accounts and libraries
 * and one large invented library (T = 12,000 days, N = 100, K = 5: cost T·N²·K = 6·10⁸). 50
 * clients, each with its own signed-in session, post 5 runs one after another: 245 on the demo
 * library (T = 600, N = 25), cycling through 1 to 5 factors (cost 375,000 to 1,875,000), and 5 on
 * the large library (the first run of every tenth client). Meanwhile one more client reads
 * GET /runs/:id of a finished run every 20 ms. Ten runs are posted before the clock starts (warm-up).
 * Heavy-run thresholds (KEELSON_HEAVY_RUN_COST):
 *   - none (every run estimated inside its request, 201: what POST /runs did before heavy runs);
 *   - 20,000,000 (the default): the 5 large runs are answered 202 and estimated in the pool;
 *   - 1,000,000: also the demo runs of 3 or more factors;
 *   - 1: every run is answered 202.
 * Printed: POST latency p50/p95/max, the reader's GET latency p50/p95/max, and the time until all
 * 250 runs are answered and finished. The load average is printed beside each line.
 */
import { loadavg } from 'node:os';
import type { AddressInfo } from 'node:net';
import { performance } from 'node:perf_hooks';
import { openDb } from '../server/db/client';
import { createApp } from '../server/app';
import { createMailer } from '../server/services/mailer';
import { createJobPool } from '../server/jobs/pool';
import { seedDemoUsers } from '../server/seed/users';
import { seedDemoLibraries } from '../server/seed/demo-libraries';
import { mailSettled } from '../server/services/runs';
import { createUpload, confirmUpload } from '../server/services/libraries';
import { users } from '../server/db/schema/index';
import { eq } from 'drizzle-orm';
import type { Db } from '../server/db/client';
import type { User } from '../shared/auth';
import { benchEconomy } from './economy';
import { signInOverHttp } from './http-sign-in';

const CLIENTS = Number(process.env.BENCH_RUNS_CLIENTS ?? 50);
const PER_CLIENT = Number(process.env.BENCH_RUNS_PER_CLIENT ?? 5);
const load = () => loadavg().map((x) => x.toFixed(2)).join(' ');
const q = (xs: number[], p: number) => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor(p * s.length))];
};
const fmt = (xs: number[]) => `p50 ${q(xs, 0.5).toFixed(0).padStart(5)} ms  p95 ${q(xs, 0.95).toFixed(0).padStart(5)} ms  max ${Math.max(...xs).toFixed(0).padStart(5)} ms`;

/** The large invented library: T days, N assets, K traded factors. @returns its edition id and names. */
function addLargeLibrary(db: Db, T = 12_000, N = 100, K = 5): { editionId: number; assets: string[]; factors: string[] } {
  const admin = db.select({ id: users.id, email: users.email, name: users.name, role: users.role }).from(users).where(eq(users.email, 'admin@keelson.test')).get() as User;
  const { returns, factors } = benchEconomy(T, N, K, 91);
  const assets = Array.from({ length: N }, (_, i) => `Large ${String(i + 1).padStart(3, '0')}`);
  const fnames = Array.from({ length: K }, (_, k) => `LF${k + 1}`);
  const day0 = Date.UTC(2010, 0, 1);
  const lines = [['date', ...assets, ...fnames].join(',')];
  for (let t = 0; t < T; t++) lines.push([new Date(day0 + t * 86_400_000).toISOString().slice(0, 10), ...returns[t].map(String), ...factors[t].map(String)].join(','));
  const up = createUpload(db, admin, { name: 'large.csv', buffer: Buffer.from(lines.join('\n') + '\n') });
  const series = up.columns.map((name) => (fnames.includes(name) ? { name, kind: 'factor' as const, traded: true } : { name, kind: 'asset' as const }));
  const out = confirmUpload(db, admin, up.id, { name: 'Large invented library', visibility: 'shared', units: 'decimal', series });
  return { editionId: out.edition.id, assets, factors: fnames };
}

interface Client {
  cookie: string;
  csrf: string;
}

async function scenario(threshold: number | null): Promise<void> {
  const db = openDb(':memory:');
  await seedDemoUsers(db);
  seedDemoLibraries(db);
  const large = addLargeLibrary(db);
  const mailer = await createMailer();
  const pool = createJobPool();
  const app = createApp({ db, mailer, sessionSecret: 'bench-secret-bench-secret', jobPool: pool, heavyRunCost: threshold ?? Number.POSITIVE_INFINITY, runPollMs: 50 });
  const server = app.listen(0, '127.0.0.1');
  await new Promise((r) => server.once('listening', r));
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}/api/v1`;

  const signIn = (): Promise<Client> => signInOverHttp(base);
  const postRun = async (c: Client, body: unknown) => {
    const r = await fetch(`${base}/runs`, { method: 'POST', headers: { 'content-type': 'application/json', cookie: c.cookie, 'x-csrf-token': c.csrf }, body: JSON.stringify(body) });
    const json = (await r.json()) as { run: { id: number; status: string } };
    if (r.status !== 201 && r.status !== 202) throw new Error(`POST /runs: ${r.status} ${JSON.stringify(json).slice(0, 200)}`);
    return { status: r.status, run: json.run };
  };

  const ed = db.$client
    .prepare("select e.id as id from library_editions e join libraries l on l.id = e.library_id where l.name like 'Harbour market%' order by e.number limit 1")
    .get() as { id: number };
  const series = db.$client.prepare('select name, kind from library_series where edition_id = ? order by position').all(ed.id) as { name: string; kind: string }[];
  const assets = series.filter((s) => s.kind === 'asset').map((s) => s.name);
  const factors = series.filter((s) => s.kind === 'factor').map((s) => s.name);
  const body = (k: number) => ({
    editionId: ed.id,
    spec: { assets, factors: factors.slice(0, k), nonTraded: factors.slice(0, k).filter((f) => f === 'GALE'), stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, level: 0.05, rf: 'RF' },
  });

  const largeBody = {
    editionId: large.editionId,
    spec: { assets: large.assets, factors: large.factors, nonTraded: [], stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, level: 0.05 },
  };
  const clients = await Promise.all(Array.from({ length: CLIENTS }, signIn));
  const reader = await signIn();
  for (let i = 0; i < 10; i++) await app.runEstimator.waitFor((await postRun(reader, body((i % 5) + 1))).run.id);
  // a finished run for the reader (one factor is below every threshold but 1)
  const readId = (await postRun(reader, body(1))).run.id;
  await app.runEstimator.waitFor(readId);

  const posts: number[] = [];
  const largePosts: number[] = [];
  const reads: number[] = [];
  const ids: number[] = [];
  let queued = 0;
  let storm = true;
  const readerLoop = (async () => {
    while (storm) {
      const t0 = performance.now();
      const r = await fetch(`${base}/runs/${readId}`, { headers: { cookie: reader.cookie } });
      await r.arrayBuffer();
      reads.push(performance.now() - t0);
      await new Promise((res) => setTimeout(res, 20));
    }
  })();
  const t0 = performance.now();
  await Promise.all(
    clients.map(async (c, i) => {
      for (let j = 0; j < PER_CLIENT; j++) {
        const s = performance.now();
        const isLarge = i % 10 === 0 && j === 0;
        const out = await postRun(c, isLarge ? largeBody : body(((i + j) % 5) + 1));
        posts.push(performance.now() - s);
        if (isLarge) largePosts.push(performance.now() - s);
        ids.push(out.run.id);
        if (out.status === 202) queued += 1;
      }
    }),
  );
  const answered = performance.now() - t0;
  for (const id of ids) await app.runEstimator.waitFor(id);
  const allDone = performance.now() - t0;
  storm = false;
  await readerLoop;
  const notFinished = db.$client.prepare("select count(*) as n from runs where status != 'finished'").get() as { n: number };

  console.log(`threshold ${(threshold === null ? 'none' : threshold.toLocaleString('en-US')).padStart(10)}: ${posts.length} POSTs (${queued} answered 202), all answered in ${(answered / 1000).toFixed(2)} s, all finished in ${(allDone / 1000).toFixed(2)} s${notFinished.n ? `, ${notFinished.n} NOT finished` : ''}   (load ${load()})`);
  console.log(`  POST /runs              ${fmt(posts)}`);
  console.log(`  GET /runs/:id meanwhile ${fmt(reads)}   (n = ${reads.length})`);
  const took = db.$client.prepare('select (julianday(finished_at) - julianday(started_at)) * 86400000 as ms from runs where edition_id = ? and started_at is not null').all(large.editionId) as { ms: number }[];
  console.log(`  the 5 large runs: POST ${largePosts.map((x) => x.toFixed(0)).join(', ')} ms; estimated in ${took.map((r) => r.ms.toFixed(0)).join(', ')} ms`);
  if (notFinished.n) process.exitCode = 1;

  await new Promise<void>((r) => server.close(() => r()));
  await mailSettled();
  app.close();
  await app.closed();
  await pool.destroy();
  await mailer.close();
  db.$client.close();
}

console.log(`${CLIENTS} clients × ${PER_CLIENT} runs (5 on the large library); load average ${load()}`);
for (const threshold of [null, 20_000_000, 1_000_000, 1]) await scenario(threshold);

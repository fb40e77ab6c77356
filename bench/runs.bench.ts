/**
 * Runs through the API on the demo library (Harbour market: 25 test portfolios, 5 factors,
 * T = 600 months): POST /api/v1/runs (validate, load the edition, estimate, store, respond),
 * then GET /runs/:id, the CSV export and compare of two nested runs.
 * Prints p50/p95 over 20 timed calls after 3 warm-up calls. In-process app on an in-memory database.
 */
import request from 'supertest';
import { performance } from 'node:perf_hooks';
import { openDb } from '../server/db/client';
import { createApp } from '../server/app';
import { createMailer } from '../server/services/mailer';
import { seedDemoUsers, DEMO_PASSWORD } from '../server/seed/users';
import { seedDemoLibraries } from '../server/seed/demo-libraries';
import { mailSettled } from '../server/services/runs';

const WARMUP = 3;
const TIMED = 20;

function quantile(xs: number[], q: number): number {
  const s = [...xs].sort((a, b) => a - b);
  const pos = (s.length - 1) * q;
  const lo = Math.floor(pos);
  const hi = Math.ceil(pos);
  return s[lo] + (s[hi] - s[lo]) * (pos - lo);
}

async function timeIt(label: string, fn: () => Promise<void>): Promise<void> {
  for (let i = 0; i < WARMUP; i++) await fn();
  const ms: number[] = [];
  for (let i = 0; i < TIMED; i++) {
    const t0 = performance.now();
    await fn();
    ms.push(performance.now() - t0);
  }
  console.log(`${label.padEnd(52)} p50 ${quantile(ms, 0.5).toFixed(1).padStart(7)} ms   p95 ${quantile(ms, 0.95).toFixed(1).padStart(7)} ms   (n = ${TIMED})`);
}

const db = openDb(':memory:');
await seedDemoUsers(db);
seedDemoLibraries(db);
const mailer = await createMailer();
const app = createApp({ db, mailer, sessionSecret: 'bench-secret-bench-secret' });
const agent = request.agent(app);
const csrf0 = (await agent.get('/api/v1/auth/csrf')).body.token as string;
const csrf = (await agent.post('/api/v1/auth/login').set('x-csrf-token', csrf0).send({ email: 'researcher@keelson.test', password: DEMO_PASSWORD }).expect(200)).body.csrfToken as string;

const ed = db.$client
  .prepare("select e.id as id from library_editions e join libraries l on l.id = e.library_id where l.name like 'Harbour market%' order by e.number limit 1")
  .get() as { id: number } | undefined;
if (!ed) throw new Error('The demo library is missing');
const series = db.$client.prepare('select name, kind from library_series where edition_id = ? order by position').all(ed.id) as { name: string; kind: string }[];
const assets = series.filter((s) => s.kind === 'asset').map((s) => s.name);
const factors = series.filter((s) => s.kind === 'factor').map((s) => s.name);
const spec = (fs: string[], stage = 'second') => ({
  assets,
  factors: fs,
  nonTraded: fs.filter((f) => f === 'GALE'),
  stage,
  weighting: 'identity',
  lags: 'auto',
  form: 'centred',
  factorMeansKnown: false,
  level: 0.05,
  rf: 'RF',
});
console.log(`demo edition ${ed.id}: N = ${assets.length}, K = ${factors.length} (${factors.join(', ')})`);

let lastId = 0;
for (const [label, body] of [
  ['POST /runs, second stage, all factors', spec(factors)],
  ['POST /runs, iterated, all factors', spec(factors, 'iterated')],
  ['POST /runs, second stage, one factor', spec(factors.slice(0, 1))],
] as const) {
  await timeIt(label, async () => {
    const r = await agent.post('/api/v1/runs').set('x-csrf-token', csrf).send({ editionId: ed.id, spec: body });
    if (r.status !== 201 || r.body.run.status !== 'finished') throw new Error(`run failed: ${r.status} ${JSON.stringify(r.body).slice(0, 300)}`);
    lastId = r.body.run.id;
  });
}
const small = (await agent.post('/api/v1/runs').set('x-csrf-token', csrf).send({ editionId: ed.id, spec: spec(factors.slice(0, 2)) })).body.run.id;
const large = (await agent.post('/api/v1/runs').set('x-csrf-token', csrf).send({ editionId: ed.id, spec: spec(factors) })).body.run.id;
await timeIt('GET /runs/:id', async () => {
  await agent.get(`/api/v1/runs/${lastId}`).expect(200);
});
await timeIt('GET /runs/:id/export.csv', async () => {
  await agent.get(`/api/v1/runs/${large}/export.csv`).expect(200);
});
await timeIt('GET /runs/compare (nested, re-estimates larger)', async () => {
  await agent.get(`/api/v1/runs/compare?a=${small}&b=${large}`).expect(200);
});
await timeIt('GET /runs (list)', async () => {
  await agent.get('/api/v1/runs').expect(200);
});
await mailSettled();
app.close();
await mailer.close();
db.$client.close();

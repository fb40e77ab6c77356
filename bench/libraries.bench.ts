/**
 * Return-library benchmarks (run by `npm run bench`):
 *  - import of a 12,000-row × 50-series daily CSV (~5 MB) through the HTTP API, upload → confirm → stored edition;
 *  - read-back of a full edition through GET …/editions/:n/data (JSON, parsed by the client);
 *  - the same for 1,200 months × 100 series; and loadEditionData (the runs module's read) directly.
 * A file database in a temporary folder (WAL), as in production. Reports medians.
 * Targets: import ≤ 3 s, read-back ≤ 300 ms.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import os, { tmpdir } from 'node:os';
import { join } from 'node:path';
import request from 'supertest';
import { openDb } from '../server/db/client';
import { createApp } from '../server/app';
import { createMailer } from '../server/services/mailer';
import { DEMO_PASSWORD, seedDemoUsers } from '../server/seed/users';
import { loadEditionData } from '../server/services/edition-data';
import { mulberry32 } from '../lib/gmm/random';
import { median } from './median';


function makeCsv(kind: 'daily' | 'monthly', T: number, N: number): string {
  const rnd = mulberry32(42);
  const lines = [['date', ...Array.from({ length: N }, (_, k) => `S${k + 1}`)].join(',')];
  const d = new Date(Date.UTC(kind === 'daily' ? 1978 : 1900, 0, 2));
  for (let t = 0; t < T; t++) {
    let label: string;
    if (kind === 'daily') {
      while (d.getUTCDay() === 0 || d.getUTCDay() === 6) d.setUTCDate(d.getUTCDate() + 1);
      label = d.toISOString().slice(0, 10);
      d.setUTCDate(d.getUTCDate() + 1);
    } else {
      label = `${1900 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}`;
    }
    const row = [label];
    for (let k = 0; k < N; k++) row.push(((rnd() - 0.5) * 0.04).toFixed(6));
    lines.push(row.join(','));
  }
  return `${lines.join('\n')}\n`;
}

const cpuMs = (c: NodeJS.CpuUsage) => (c.user + c.system) / 1000;

const dir = mkdtempSync(join(tmpdir(), 'keelson-bench-'));
const db = openDb(join(dir, 'bench.db'));
await seedDemoUsers(db);
const mailer = await createMailer();
const app = createApp({ db, mailer, sessionSecret: 'bench-secret-bench-secret', uploadLimit: 50 * 1024 * 1024 });
const agent = request.agent(app);
const csrf0 = (await agent.get('/api/v1/auth/csrf')).body.token as string;
const csrf = (await agent.post('/api/v1/auth/login').set('x-csrf-token', csrf0).send({ email: 'admin@keelson.test', password: DEMO_PASSWORD }).expect(200)).body.csrfToken as string;

async function importOnce(csv: Buffer, libraryId?: number): Promise<{ ms: number; cpu: number; uploadMs: number; libraryId: number; edition: number; editionId: number }> {
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  const up = await agent.post('/api/v1/libraries/uploads').set('x-csrf-token', csrf).attach('file', csv, { filename: 'bench.csv', contentType: 'text/csv' });
  if (up.status !== 201) throw new Error(`upload ${up.status} ${JSON.stringify(up.body).slice(0, 200)}`);
  const t1 = performance.now();
  const cols = up.body.upload.columns as string[];
  const body = {
    ...(libraryId ? { libraryId } : { name: 'Bench', visibility: 'shared' }),
    units: 'decimal',
    series: cols.map((name, k) => ({ name, kind: k < 5 ? 'factor' : 'asset', traded: true })),
  };
  const c = await agent.post(`/api/v1/libraries/uploads/${up.body.upload.id}/confirm`).set('x-csrf-token', csrf).send(body);
  if (c.status !== 201) throw new Error(`confirm ${c.status} ${JSON.stringify(c.body).slice(0, 200)}`);
  return { ms: performance.now() - t0, cpu: cpuMs(process.cpuUsage(c0)), uploadMs: t1 - t0, libraryId: c.body.library.id, edition: c.body.edition.number, editionId: c.body.edition.id };
}

async function scenario(label: string, kind: 'daily' | 'monthly', T: number, N: number): Promise<void> {
  const csv = Buffer.from(makeCsv(kind, T, N));
  console.log(`\n${label}: ${T} rows × ${N} series, ${(csv.length / 1024 / 1024).toFixed(2)} MB`);
  const imports: number[] = [];
  const importCpu: number[] = [];
  const uploads: number[] = [];
  let lib = 0;
  let n = 0;
  let editionId = 0;
  for (let i = 0; i < 5; i++) {
    const r = await importOnce(csv, lib || undefined);
    imports.push(r.ms);
    importCpu.push(r.cpu);
    uploads.push(r.uploadMs);
    lib = r.libraryId;
    n = r.edition;
    editionId = r.editionId;
  }
  console.log(`  import upload→stored edition: median ${median(imports).toFixed(0)} ms (upload+parse ${median(uploads).toFixed(0)} ms) over ${imports.length} runs (CPU ${median(importCpu).toFixed(0)} ms, client and server) — target ≤ 3000 ms`);
  const reads: number[] = [];
  const readCpu: number[] = [];
  let bytes = 0;
  for (let i = 0; i < 10; i++) {
    const t0 = performance.now();
    const c0 = process.cpuUsage();
    const r = await agent.get(`/api/v1/libraries/${lib}/editions/${n}/data`).expect(200);
    reads.push(performance.now() - t0);
    readCpu.push(cpuMs(process.cpuUsage(c0)));
    bytes = r.text.length;
    if ((r.body.series as unknown[]).length !== N) throw new Error('wrong read-back');
  }
  console.log(`  read-back GET …/data (JSON ${(bytes / 1024 / 1024).toFixed(1)} MB, parsed): median ${median(reads).toFixed(0)} ms over ${reads.length} runs (CPU ${median(readCpu).toFixed(0)} ms) — target ≤ 300 ms`);
  const direct: number[] = [];
  for (let i = 0; i < 10; i++) {
    const t0 = performance.now();
    loadEditionData(db, editionId);
    direct.push(performance.now() - t0);
  }
  console.log(`  loadEditionData (in process): median ${median(direct).toFixed(1)} ms`);
}

console.log(`load average ${os.loadavg().map((x) => x.toFixed(1)).join(' ')} on ${os.cpus().length} cores (wall times inflate when the machine is busy; CPU times less so)`);
await scenario('daily', 'daily', 12_000, 50);
await scenario('monthly', 'monthly', 1_200, 100);

app.close();
await mailer.close();
db.$client.close();
rmSync(dir, { recursive: true, force: true });

/**
 * Where a queued deep check spends its time (`npx tsx bench/queue-timeline.ts`): starts Debian's
 * redis-server on a free loopback port and W `keelson worker` processes (default 2), runs one flow,
 * and prints each chunk's start and end and the summary's from BullMQ's own job records
 * (processedOn / finishedOn), with the chunks' combined busy time.
 *   KIND=bootstrap (default): T = 12,000, N = 100, K = 5, D draws (default 2,000), as bench queue.
 *   KIND=sweep: 20 candidates, T = 600, N = 25, as bench queue's sweep.
 * Not part of `npm run bench` (it explains the queue bench's figures rather than adding one).
 */
import { Queue } from 'bullmq';
import { QueueClient } from '../server/jobs/queue-client';
import { chunkRanges } from '../server/jobs/runner';
import { QUEUE_NAME, QUEUE_PREFIX } from '../server/jobs/queue-shared';
import type { CheckInput } from '../server/services/jobs-input';
import { startWorkerProcess, testRedis } from '../tests/queue/redis';
import { benchEconomy, normals } from './economy';

const W = Number(process.env.W ?? 2);
const D = Number(process.env.D ?? 2000);
const KIND = process.env.KIND === 'sweep' ? 'sweep' : 'bootstrap';

function bootstrapCheck(T: number, N: number, K: number, draws: number): Extract<CheckInput, { kind: 'bootstrap' }> {
  const z = normals(42);
  const beta = Array.from({ length: N }, () => Array.from({ length: K }, () => 0.2 + 0.6 * Math.abs(z())));
  const factors: number[][] = [];
  const returns: number[][] = [];
  for (let t = 0; t < T; t++) {
    const f = Array.from({ length: K }, (_, k) => 0.003 + 0.001 * k + 0.03 * z());
    factors.push(f);
    returns.push(beta.map((b) => b.reduce((s, bk, k) => s + bk * f[k], 0) + 0.02 * z()));
  }
  const factorNames = Array.from({ length: K }, (_, k) => `F${k + 1}`);
  const options = { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, scheme: 'iid', draws, seed: 5 } as const;
  return { kind: 'bootstrap', total: draws, input: { returns, factors, factorNames, options } };
}

function sweepCheck(): Extract<CheckInput, { kind: 'subset-sweep' }> {
  const { returns, factors } = benchEconomy(600, 25, 20, 7);
  const names = Array.from({ length: 20 }, (_, k) => `C${k + 1}`);
  const options = { lags: 'auto', form: 'centred', factorMeansKnown: false, weighting: 'identity', stage: 'second', level: 0.05, topPerSize: 5 } as const;
  return { kind: 'subset-sweep', total: 2 ** 20 - 1, input: { returns, factors, factorNames: names, traded: names.map(() => true), options } };
}

async function runFlow(q: QueueClient, flow: string, check: Extract<CheckInput, { kind: 'bootstrap' | 'subset-sweep' }>): Promise<void> {
  await q.enqueue(flow, check, chunkRanges(check.total, check.kind), check.total);
  for (;;) {
    const s = await q.state(flow);
    if (s.state === 'completed') return;
    if (s.state === 'failed' || s.state === 'missing') throw new Error(`${flow}: ${JSON.stringify(s)}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

const redis = await testRedis();
const q = new QueueClient(redis.url, { timeoutMs: 60_000 });
const workers = [];
for (let i = 0; i < W; i++) workers.push(await startWorkerProcess(redis.url, { lockMs: 30_000 }));
await runFlow(q, 'timeline-warm', bootstrapCheck(120, 5, 2, 40)); // worker threads up
const check = KIND === 'sweep' ? sweepCheck() : bootstrapCheck(12_000, 100, 5, D);
const t0 = Date.now();
await runFlow(q, 'timeline', check);
const total = Date.now() - t0;
const queue = new Queue(QUEUE_NAME, { connection: { url: redis.url }, prefix: QUEUE_PREFIX });
const rows = (await queue.getJobs(['completed']))
  .filter((j) => (j.data as { flow?: string }).flow === 'timeline')
  .map((j) => ({ name: j.name, from: (j.data as { from?: number }).from ?? null, start: (j.processedOn ?? t0) - t0, end: (j.finishedOn ?? t0) - t0 }))
  .sort((a, b) => a.start - b.start);
const chunks = rows.filter((r) => r.name === 'chunk');
const busy = chunks.reduce((s, r) => s + r.end - r.start, 0);
const sec = (ms: number) => (ms / 1000).toFixed(2);
console.log(`${KIND} on ${W} worker(s): enqueue → done ${sec(total)} s; ${chunks.length} chunks, busy ${sec(busy)} s in all, last chunk ends at ${sec(Math.max(...chunks.map((r) => r.end)))} s`);
const shown = rows.length > 14 ? [...rows.slice(0, 6), ...rows.slice(-7)] : rows;
for (const r of shown) console.log(`  ${r.name.padEnd(8)} ${String(r.from ?? '').padStart(8)}  ${sec(r.start).padStart(7)} → ${sec(r.end).padStart(7)} s  (${sec(r.end - r.start)} s)`);
await queue.close();
for (const w of workers) {
  w.proc.kill('SIGTERM');
  await w.exited;
}
await redis.stop();
process.exit(0);

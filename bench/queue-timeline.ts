/**
 * Where a queued deep check spends its time (`npx tsx bench/queue-timeline.ts`): starts Debian's
 * redis-server on a free loopback port and W `keelson worker` processes (default 2), runs one flow,
 * and prints each chunk's start and end and the summary's from BullMQ's own job records
 * (processedOn / finishedOn), with the chunks' combined busy time.
 *   KIND=bootstrap (default): T = 12,000, N = 100, K = 5, D draws (default 2,000), as bench queue.
 *   KIND=sweep: 20 candidates, T = 600, N = 25: bench queue's sweep.
 * Not part of `npm run bench` (it explains the queue bench's figures rather than adding one).
 */
import { Queue } from 'bullmq';
import { QueueClient } from '../server/jobs/queue-client';
import { chunkRanges } from '../server/jobs/runner';
import { QUEUE_NAME, QUEUE_PREFIX } from '../server/jobs/queue-shared';
import type { CheckInput } from '../server/services/jobs-input';
import { startWorkerProcess, testRedis } from '../tests/queue/redis';
import { bootstrapCheck, sweepCheck } from './queue-checks';

const W = Number(process.env.W ?? 2);
const D = Number(process.env.D ?? 2000);
const KIND = process.env.KIND === 'sweep' ? 'sweep' : 'bootstrap';

const never = new AbortController().signal;

async function runFlow(q: QueueClient, flow: string, check: Extract<CheckInput, { kind: 'bootstrap' | 'subset-sweep' }>): Promise<void> {
  await q.enqueue(flow, check, chunkRanges(check.total, check.kind), check.total);
  for (;;) {
    const s = await q.state(flow);
    if (s.state === 'completed') return;
    if (s.state === 'failed' || s.state === 'missing') throw new Error(`${flow}: ${JSON.stringify(s)}`);
    await q.pause(flow, 250, never); // as the API follows a flow: woken by the summary's end
  }
}

const redis = await testRedis();
const q = new QueueClient(redis.url, { timeoutMs: 60_000 });
const workers = [];
for (let i = 0; i < W; i++) workers.push(await startWorkerProcess(redis.url, { lockMs: 30_000 }));
await runFlow(q, 'timeline-warm', bootstrapCheck(120, 5, 2, 40, 1)); // worker threads up
// a thread's first sweep also compiles the sweep's code (about 0.1 s): warm it on a smaller sweep
if (KIND === 'sweep') for (let i = 0; i < 3; i++) await runFlow(q, `timeline-warm-sweep-${i}`, sweepCheck(600, 25, 18, 5 + i));
const check = KIND === 'sweep' ? sweepCheck(600, 25, 20, 77) : bootstrapCheck(12_000, 100, 5, D, 42);
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
if (process.env.TRACE) for (const w of workers) console.log(w.output().split('\n').filter((l) => l.startsWith('TRACE')).join('\n'));
for (const w of workers) {
  w.proc.kill('SIGTERM');
  await w.exited;
}
await redis.stop();
process.exit(0);

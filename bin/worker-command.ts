/**
 * `keelson worker --redis redis://host:6379 [--concurrency N]`: a queue worker for deep checks
 * (server/jobs/queue-worker.ts). No database, no session: it reads chunks and their input from
 * Redis and writes results back there. SIGTERM or SIGINT: it stops taking chunks, finishes the
 * running ones (or hands them back after the grace period) and exits 0.
 */
import { parseArgs } from 'node:util';
import { startQueueWorker } from '../server/jobs/queue-worker';

export const WORKER_USAGE = `usage: keelson worker --redis redis://host:6379 [--concurrency N]

Runs deep-check chunks for a Keelson API in queue mode (KEELSON_REDIS_URL), on any machine.

  --redis URL          the Redis the API uses (default $KEELSON_REDIS_URL)
  --concurrency N      chunks at once, one thread each (default: this machine's threads less one)
  --grace S            on SIGTERM, seconds running chunks may take before they are handed back (default 30)`;

interface Io {
  out: (s: string) => void;
  err: (s: string) => void;
}

/** Starts the worker and resolves with the exit code once it has shut down. */
export async function runWorkerCommand(argv: string[], io: Io): Promise<number> {
  let values;
  try {
    ({ values } = parseArgs({
      args: argv,
      options: { redis: { type: 'string' }, concurrency: { type: 'string' }, grace: { type: 'string' }, help: { type: 'boolean', short: 'h' } },
      strict: true,
    }));
  } catch (e) {
    io.err(`keelson: ${(e as Error).message.split('\n')[0]} (see keelson worker --help)\n`);
    return 2;
  }
  if (values.help) {
    io.out(WORKER_USAGE + '\n');
    return 0;
  }
  const url = values.redis ?? process.env.KEELSON_REDIS_URL;
  if (!url || !/^rediss?:\/\/[^/]/.test(url)) {
    io.err('keelson: worker needs --redis redis://host:port (or KEELSON_REDIS_URL)\n');
    return 2;
  }
  const concurrency = values.concurrency === undefined ? undefined : Number(values.concurrency);
  if (concurrency !== undefined && !(Number.isInteger(concurrency) && concurrency >= 1 && concurrency <= 256)) {
    io.err('keelson: --concurrency is a whole number from 1 to 256\n');
    return 2;
  }
  const grace = values.grace === undefined ? 30 : Number(values.grace);
  if (!(grace >= 0)) {
    io.err('keelson: --grace is a number of seconds, 0 or more\n');
    return 2;
  }
  const lockMs = Number(process.env.KEELSON_WORKER_LOCK_MS) || undefined;
  const worker = startQueueWorker({ redisUrl: url, concurrency, graceMs: grace * 1000, lockMs, log: (l) => io.err(l + '\n') });
  const where = new URL(url).host;
  await worker.ready();
  io.out(`keelson worker: ${worker.concurrency} chunk(s) at once from ${where}; SIGTERM stops it gracefully\n`);
  await new Promise<void>((resolve) => {
    const stop = (sig: string) => {
      io.out(`keelson worker: ${sig}, finishing running chunks\n`);
      resolve();
    };
    process.once('SIGTERM', () => stop('SIGTERM'));
    process.once('SIGINT', () => stop('SIGINT'));
  });
  await worker.close();
  io.out(`keelson worker: stopped after ${worker.completed} chunk(s)\n`);
  return 0;
}

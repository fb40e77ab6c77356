/**
 * Real components for the queue tests: a Redis server and `keelson worker` processes.
 *
 * Redis: when CI set KEELSON_TEST_REDIS_URL (.ci/run starts one), the tests use it and FAIL when it
 * does not answer. When it is not set, they start their own Debian redis-server from
 * /usr/bin/redis-server on a free loopback port with no persistence, or fail with the install
 * command. They never skip.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { Redis } from 'ioredis';
import type { FlowState, QueueClient } from '../../server/jobs/queue-client';
import type { QueueWorker } from '../../server/jobs/queue-worker';
import type { JobPool } from '../../server/jobs/pool';
import { createApp, type AppOptions, type KeelsonApp } from '../../server/app';
import { openDb, type Db } from '../../server/db/client';
import { createMailer, type Mailer } from '../../server/services/mailer';
import { mailSettled } from '../../server/services/runs';
import { seedDemoUsers } from '../../server/seed/users';
import { agentAs, type Agent } from '../api/helpers';
import { makeFixture, uploadFixture } from '../api/runs-fixture';

export const REDIS_SERVER = '/usr/bin/redis-server';
export const REDIS_INSTALL = 'apt-get install -y redis-server';
const ROOT = resolve(import.meta.dirname, '../..');

export interface TestRedis {
  url: string;
  /** Stops the server (only one this helper started); CI's server is left to CI. */
  stop(): Promise<void>;
  /** Stops and starts the server this helper started, on the same port (an outage). */
  restart?: (downMs: number) => Promise<void>;
}

export function freePort(): Promise<number> {
  return new Promise((res, rej) => {
    const s = createServer();
    s.unref();
    s.on('error', rej);
    s.listen(0, '127.0.0.1', () => {
      const a = s.address();
      const port = typeof a === 'object' && a ? a.port : 0;
      s.close(() => res(port));
    });
  });
}

async function ping(url: string, ms = 3000): Promise<void> {
  const r = new Redis(url, { lazyConnect: true, maxRetriesPerRequest: 0, connectTimeout: ms, retryStrategy: () => null });
  r.on('error', () => undefined);
  try {
    await r.connect();
    await r.ping();
  } finally {
    r.disconnect();
  }
}

async function waitUp(url: string, ms = 10_000): Promise<void> {
  const end = Date.now() + ms;
  for (;;) {
    try {
      await ping(url, 500);
      return;
    } catch (e) {
      if (Date.now() > end) throw e;
      await new Promise((r) => setTimeout(r, 50));
    }
  }
}

/**
 * A Redis for the tests (see the file's note). Throws with the reason; never resolves to "skip".
 * `own`: always start a private server (a test that stops and starts Redis cannot use CI's).
 */
export async function testRedis(opts: { own?: boolean } = {}): Promise<TestRedis> {
  const ci = opts.own ? undefined : process.env.KEELSON_TEST_REDIS_URL;
  if (ci) {
    try {
      await ping(ci);
    } catch (e) {
      throw new Error(`KEELSON_TEST_REDIS_URL=${ci} is set but Redis does not answer there: ${(e as Error).message}`);
    }
    return { url: ci, stop: async () => undefined };
  }
  if (!existsSync(REDIS_SERVER)) throw new Error(`The queue tests need Debian's redis-server at ${REDIS_SERVER}; install it with:\n  ${REDIS_INSTALL}`);
  const port = await freePort();
  const dir = mkdtempSync(join(tmpdir(), 'keelson-redis-'));
  const url = `redis://127.0.0.1:${port}`;
  let proc: ChildProcess | null = null;
  const up = async () => {
    proc = spawn(REDIS_SERVER, ['--port', String(port), '--bind', '127.0.0.1', '--save', '', '--appendonly', 'no', '--dir', dir], { stdio: 'ignore' });
    await waitUp(url);
  };
  const down = async () => {
    const p = proc;
    proc = null;
    if (!p || p.exitCode !== null) return;
    await new Promise<void>((r) => {
      p.once('exit', () => r());
      p.kill('SIGTERM');
    });
  };
  await up();
  return {
    url,
    stop: async () => {
      await down();
      rmSync(dir, { recursive: true, force: true });
    },
    restart: async (downMs: number) => {
      await down();
      await new Promise((r) => setTimeout(r, downMs));
      await up();
    },
  };
}

export interface WorkerProcess {
  proc: ChildProcess;
  output: () => string;
  /** Resolves with the exit code. */
  exited: Promise<number | null>;
}

/** Starts `keelson worker` as its own process (the launcher users run) and waits until it listens. */
export async function startWorkerProcess(url: string, opts: { concurrency?: number; lockMs?: number } = {}): Promise<WorkerProcess> {
  // the launcher itself, through its shebang (node --single-threaded-gc), as `npx keelson` runs it
  const args = ['worker', '--redis', url, '--concurrency', String(opts.concurrency ?? 1)];
  const proc = spawn(join(ROOT, 'bin/keelson.mjs'), args, {
    cwd: ROOT,
    env: { ...process.env, KEELSON_WORKER_LOCK_MS: String(opts.lockMs ?? 2000) },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  proc.stdout!.on('data', (b: Buffer) => (out += b.toString()));
  proc.stderr!.on('data', (b: Buffer) => (out += b.toString()));
  const exited = new Promise<number | null>((r) => proc.once('exit', (code) => r(code)));
  const end = Date.now() + 30_000;
  while (!/chunk\(s\) at once/.test(out)) {
    if (proc.exitCode !== null) throw new Error(`keelson worker exited ${proc.exitCode}: ${out}`);
    if (Date.now() > end) throw new Error(`keelson worker did not start: ${out}`);
    await new Promise((r) => setTimeout(r, 50));
  }
  return { proc, output: () => out, exited };
}

/** A queue-mode app on a file database of its own, with the parts stopQueueTest takes down. */
export interface QueueTestApp {
  redis: TestRedis;
  /** The URL the app uses: the test Redis, on logical database `db` when one was asked for. */
  url: string;
  dir: string;
  db: Db;
  mailer: Mailer;
  app: KeelsonApp;
}

/**
 * Builds a queue-mode app (KEELSON_REDIS_URL = the test Redis) on a file database in a fresh
 * directory `prefix`…, with the demo users. `offsetIds` moves the ids of that table far from the
 * other queue test files', which run in parallel and may share CI's Redis (flow ids job-<id>-<n>
 * and run-<id> name keys there). `redisDb` puts this app's queue on its own logical Redis
 * database, so that only this file's workers take its jobs (the other files' workers use 0).
 */
export async function startQueueTestApp(
  prefix: string,
  opts: Partial<Omit<AppOptions, 'db' | 'mailer' | 'redisUrl'>> = {},
  place: { offsetIds?: 'jobs' | 'runs'; redisDb?: number } = {},
): Promise<QueueTestApp> {
  const redis = await testRedis();
  const url = place.redisDb === undefined ? redis.url : `${redis.url.replace(/\/\d*$/, '')}/${place.redisDb}`;
  const dir = mkdtempSync(join(tmpdir(), prefix));
  const db = openDb(join(dir, 'keelson.db'));
  if (place.offsetIds)
    db.$client.prepare('INSERT INTO sqlite_sequence (name, seq) VALUES (?, ?)').run(place.offsetIds, 250_000 + Math.floor(Math.random() * 1_000_000));
  await seedDemoUsers(db);
  const mailer = await createMailer();
  const app = createApp({ db, mailer, sessionSecret: 'test-secret-test-secret', redisUrl: url, ...opts });
  return { redis, url, dir, db, mailer, app };
}

/**
 * Teardown of a queue test that built its own app on a file database: kills the worker processes
 * still running, lets mail settle, closes the app (heavy runs, then the job runner), the mailer
 * and the database, stops the Redis this helper started and removes the directory. Every part is optional (a
 * beforeAll that failed half-way leaves some undefined).
 */
export async function stopQueueTest(parts: { workers?: readonly WorkerProcess[]; app?: KeelsonApp; mailer?: Mailer; db?: Db; redis?: TestRedis; dir?: string }): Promise<void> {
  for (const w of parts.workers ?? []) if (w.proc.exitCode === null) w.proc.kill('SIGKILL');
  await mailSettled();
  parts.app?.close(); // stops heavy runs, then the job runner
  await parts.app?.closed();
  await parts.mailer?.close();
  parts.db?.$client.close();
  await parts.redis?.stop();
  if (parts.dir) rmSync(parts.dir, { recursive: true, force: true });
}

/** A queue-mode app with the invented library uploaded, a signed-in researcher and one `keelson worker` process. */
export interface QueueLibraryTest {
  q: QueueTestApp;
  researcher: Agent;
  editionId: number;
  worker: WorkerProcess;
}

/** startQueueTestApp, then the invented economy (tests/api/runs-fixture.ts) shared by the admin, and a worker on the app's Redis. */
export async function startQueueLibraryTest(prefix: string, opts: Parameters<typeof startQueueTestApp>[1], place: Parameters<typeof startQueueTestApp>[2]): Promise<QueueLibraryTest> {
  const q = await startQueueTestApp(prefix, opts, place);
  const admin = await agentAs(q.app, 'admin');
  const researcher = await agentAs(q.app, 'researcher');
  const editionId = (await uploadFixture(admin, makeFixture(), { name: 'Invented economy', visibility: 'shared' })).editionId;
  const worker = await startWorkerProcess(q.url);
  return { q, researcher, editionId, worker };
}

/** Reads flow `flow` until it completes or fails (30 s at most). */
export async function flowEnded(q: QueueClient, flow: string): Promise<FlowState> {
  const end = Date.now() + 30_000;
  for (;;) {
    const s = await q.state(flow);
    if (s.state === 'completed' || s.state === 'failed') return s;
    if (Date.now() > end) throw new Error(`${flow} did not end: ${JSON.stringify(s)}`);
    await new Promise((res) => setTimeout(res, 25));
  }
}

/** Stops what an in-process queue test started, in this order: worker, pool, client, connection, server. */
export async function stopInProcessQueue(p: { worker?: QueueWorker; pool?: JobPool; q?: QueueClient; r?: Redis; redis?: TestRedis }): Promise<void> {
  await p.worker?.close();
  await p.pool?.destroy();
  await p.q?.close();
  p.r?.disconnect();
  await p.redis?.stop();
}

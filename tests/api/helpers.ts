/**
 * Shared helpers for API tests: an app on a private in-memory database with the demo accounts,
 * and supertest agents that are signed in and carry the CSRF token.
 */
import { runRemote } from '../../bin/remote';
import request from 'supertest';
import { openDb, type Db } from '../../server/db/client';
import { createApp, type AppOptions, type KeelsonApp } from '../../server/app';
import { createMailer, type Mailer } from '../../server/services/mailer';
import { DEMO_PASSWORD, seedDemoUsers } from '../../server/seed/users';
import type { Role } from '../../shared/roles';
import { ROLES } from '../../shared/roles';
import type { JobPool } from '../../server/jobs/pool';
import type { ChunkTask } from '../../server/jobs/tasks';

export interface TestApp {
  app: KeelsonApp;
  db: Db;
  mailer: Mailer;
  close: () => Promise<void>;
}

export async function makeTestApp(opts: Partial<Omit<AppOptions, 'db' | 'mailer'>> = {}): Promise<TestApp> {
  const db = openDb(':memory:');
  await seedDemoUsers(db);
  const mailer = await createMailer();
  const app = createApp({ db, mailer, sessionSecret: 'test-secret-test-secret', ...opts });
  return {
    app,
    db,
    mailer,
    close: async () => {
      app.close();
      await mailer.close();
      db.$client.close();
    },
  };
}

export type Agent = ReturnType<typeof request.agent> & { csrf: string };

/** A cookie-keeping agent with a CSRF token, not signed in. */
export async function anonymousAgent(app: KeelsonApp): Promise<Agent> {
  const agent = request.agent(app) as Agent;
  const r = await agent.get('/api/v1/auth/csrf').expect(200);
  agent.csrf = (r.body as { token: string }).token;
  return agent;
}

/** Runs one `keelson` remote command with its home in `home`; returns exit code and what it printed. */
export async function runCli(home: string, args: string[], password?: string): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await runRemote(args[0], args.slice(1), {
    out: (s) => (out += s),
    err: (s) => (err += s),
    env: { NODE_ENV: 'test', KEELSON_HOME: home, ...(password ? { KEELSON_PASSWORD: password } : {}) },
  });
  return { code, out, err };
}

/** POST /api/v1<url> as `agent`, with its CSRF token and a JSON body. */
export function post(agent: Agent, url: string, body: unknown = {}) {
  return agent.post(`/api/v1${url}`).set('x-csrf-token', agent.csrf).send(body as object);
}

/** An agent signed in as the demo account of `role`. */
export async function agentAs(app: KeelsonApp, role: Role): Promise<Agent> {
  const agent = await anonymousAgent(app);
  const r = await agent
    .post('/api/v1/auth/login')
    .set('x-csrf-token', agent.csrf)
    .send({ email: `${role}@keelson.test`, password: DEMO_PASSWORD })
    .expect(200);
  // Sign-in rotates the CSRF token; the new one comes back in the answer.
  agent.csrf = (r.body as { csrfToken: string }).csrfToken;
  return agent;
}

export async function agentsForAllRoles(app: KeelsonApp): Promise<Record<Role, Agent>> {
  const out = {} as Record<Role, Agent>;
  for (const r of ROLES) out[r] = await agentAs(app, r);
  return out;
}

/** Counts the rows of every table, to assert that a refused request wrote nothing. */
export function tableCounts(db: Db): Record<string, number> {
  const names = db.$client
    .prepare("select name from sqlite_master where type = 'table' and name not like 'sqlite_%' and name not like '__drizzle%'")
    .all() as { name: string }[];
  const out: Record<string, number> = {};
  for (const { name } of names) {
    if (name === 'sessions') continue; // sessions change on every request by design
    out[name] = (db.$client.prepare(`select count(*) as n from "${name}"`).get() as { n: number }).n;
  }
  return out;
}

export function expectEnvelope(body: unknown, code?: string): { code: string; message: string } {
  const e = (body as { error?: { code: string; message: string } }).error;
  if (!e || typeof e.message !== 'string' || e.message.length === 0) {
    throw new Error(`Expected an error envelope, got ${JSON.stringify(body)}`);
  }
  if (code && e.code !== code) throw new Error(`Expected error code ${code}, got ${e.code}: ${e.message}`);
  return e;
}

/** One task a holdingPool holds: aborted when its signal fired; `release` answers it (a test's own computation). */
export interface HeldTask {
  task: ChunkTask;
  aborted: boolean;
  release(value: unknown): void;
}

/**
 * A stand-in for a machine whose threads are all busy: a JobPool whose tasks never end by
 * themselves, each waiting for its abort signal or for the test to `release` it. `held` lists the
 * tasks it was given (tests of cancelling and of the pending run page; the numbers themselves are
 * tested on the real pool).
 */
export function holdingPool(threads = 1) {
  const held: HeldTask[] = [];
  const pool: JobPool = {
    threads,
    get queued() {
      return 0;
    },
    run<T>(task: ChunkTask, signal?: AbortSignal): Promise<T> {
      return new Promise<T>((resolve, reject) => {
        const entry: HeldTask = { task, aborted: false, release: (v) => resolve(v as T) };
        held.push(entry);
        signal?.addEventListener('abort', () => {
          entry.aborted = true;
          reject(Object.assign(new Error('aborted'), { name: 'AbortError' }));
        });
      });
    },
    destroy: async () => undefined,
  };
  return { pool, held };
}

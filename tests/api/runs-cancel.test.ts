/**
 * Cancelling a heavy run (POST /runs/:id/cancel, `keelson cancel-run`) in embedded mode.
 *
 * The pool given to the app here holds every task until it is aborted (a stand-in for a machine
 * whose threads are all busy), so a heavy run stays `running` for as long as a test needs. What is
 * checked is Keelson's own bookkeeping: the status and message, the end time, the audit line, the
 * pool task being aborted, nothing written afterwards, the roles, and the CLI. Cancelling a run on
 * real `keelson worker` processes over a real redis-server is in tests/queue/runs-heavy-queue.test.ts.
 * Data: the invented economy of runs-fixture.ts (K = 2 costs 48,000, above the threshold of 30,000).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { eq } from 'drizzle-orm';
import { agentAs, anonymousAgent, expectEnvelope, holdingPool, makeTestApp, post, runCli, type Agent, type TestApp } from './helpers';
import { makeFixture, spec, uploadFixture } from './runs-fixture';
import { completeQueuedRun, mailSettled, queuedRunTask } from '../../server/services/runs';
import { estimateRun } from '../../server/services/run-estimate';
import { createUser } from '../../server/services/users';
import { DEMO_PASSWORD } from '../../server/seed/users';
import { auditLog, runs } from '../../server/db/schema/index';
import { runResponseSchema, runsResponseSchema, type Run } from '../../shared/runs';

const THRESHOLD = 30_000;
const { pool, held } = holdingPool();
let t: TestApp;
let admin: Agent;
let researcher: Agent;
let other: Agent;
let reviewer: Agent;
let desk: Agent;
let editionId: number;

beforeAll(async () => {
  t = await makeTestApp({ heavyRunCost: THRESHOLD, jobPool: pool });
  admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  reviewer = await agentAs(t.app, 'reviewer');
  desk = await agentAs(t.app, 'desk');
  await createUser(t.db, { email: 'second-researcher@keelson.test', name: 'Second Researcher', role: 'researcher', password: DEMO_PASSWORD });
  other = await anonymousAgent(t.app);
  other.csrf = (
    await other.post('/api/v1/auth/login').set('x-csrf-token', other.csrf).send({ email: 'second-researcher@keelson.test', password: DEMO_PASSWORD }).expect(200)
  ).body.csrfToken as string;
  editionId = (await uploadFixture(admin, makeFixture(), { name: 'Invented economy', visibility: 'shared' })).editionId;
});
afterAll(async () => {
  await mailSettled();
  await t.close();
});

const getRun = async (agent: Agent, id: number): Promise<Run> => runResponseSchema.parse((await agent.get(`/api/v1/runs/${id}`).expect(200)).body).run;

/** Starts a heavy run as `agent` and waits until the pool holds its estimation (status running). */
async function heavyRunHeld(agent: Agent): Promise<number> {
  const before = held.length;
  const r = await post(agent, '/runs', { editionId, spec: spec({ rf: 'RF' }) }).expect(202);
  const id = r.body.run.id as number;
  for (let i = 0; held.length === before; i++) {
    if (i > 400) throw new Error('the estimation never reached the pool');
    await new Promise((res) => setTimeout(res, 5));
  }
  expect((await getRun(agent, id)).status).toBe('running');
  return id;
}

describe('cancelling a heavy run', () => {
  it('the author cancels a running run: cancelled with who and when, the pool task aborted, an audit line, nothing estimated', async () => {
    const id = await heavyRunHeld(researcher);
    const entry = held[held.length - 1];
    expect(entry.task.op).toBe('estimate');
    const r = await post(researcher, `/runs/${id}/cancel`).expect(200);
    const run = runResponseSchema.parse(r.body).run;
    expect(run.status).toBe('cancelled');
    expect(run.error).toBe('Cancelled by Rhea Tolland.');
    expect(run.finishedAt).not.toBeNull();
    expect(run.result).toBeNull();
    // the pool task is aborted at once, and the estimator lets go of the run
    expect(entry.aborted).toBe(true);
    await t.app.runEstimator.waitFor(id);
    expect(t.app.runEstimator.isActive(id)).toBe(false);
    expect((await getRun(researcher, id)).status).toBe('cancelled');
    const lines = t.db.select().from(auditLog).where(eq(auditLog.action, 'run.cancelled')).all();
    expect(lines.map((l) => JSON.parse(l.detail!).runId)).toContain(id);
    // it is listed as cancelled
    const list = runsResponseSchema.parse((await researcher.get('/api/v1/runs?status=cancelled').expect(200)).body);
    expect(list.runs.map((x) => x.id)).toContain(id);
  });

  it('an estimate that arrives after the cancel is not written (the run stays cancelled, with no result)', async () => {
    const id = await heavyRunHeld(researcher);
    await post(researcher, `/runs/${id}/cancel`).expect(200);
    // the real estimation of the same run, finished "late"
    const { value, bootstrap } = queuedRunTask(t.db, id);
    const out = estimateRun(value);
    expect(out.ok).toBe(true);
    expect(completeQueuedRun({ db: t.db, mailer: t.mailer, runner: t.app.jobRunner }, id, out, bootstrap)).toBeNull();
    const row = t.db.select({ status: runs.status, result: runs.result, k: runs.nFactors }).from(runs).where(eq(runs.id, id)).get()!;
    expect(row).toEqual({ status: 'cancelled', result: null, k: null });
    expect(t.db.select().from(auditLog).where(eq(auditLog.action, 'run.finished')).all().some((l) => JSON.parse(l.detail!).runId === id)).toBe(false);
  });

  it('only a queued or running run can be cancelled: 409 for a cancelled or a finished run, 404 for none', async () => {
    const id = await heavyRunHeld(researcher);
    await post(researcher, `/runs/${id}/cancel`).expect(200);
    const again = await post(researcher, `/runs/${id}/cancel`).expect(409);
    expectEnvelope(again.body, 'conflict');
    expect(again.body.error.message).toBe(`Run ${id} is cancelled; only a queued or running run can be cancelled`);
    const small = await post(researcher, '/runs', { editionId, spec: spec({ factors: ['MKT'], rf: 'RF' }) }).expect(201);
    const done = await post(researcher, `/runs/${small.body.run.id}/cancel`).expect(409);
    expect(done.body.error.message).toMatch(/is finished; only a queued or running run can be cancelled/);
    expectEnvelope((await post(researcher, '/runs/999999/cancel').expect(404)).body, 'not_found');
  });

  it('roles: reviewer and desk get 403, another researcher 403, and the run keeps running; an admin may cancel it', async () => {
    const id = await heavyRunHeld(researcher);
    for (const agent of [reviewer, desk]) expectEnvelope((await post(agent, `/runs/${id}/cancel`).expect(403)).body, 'forbidden');
    const foreign = await post(other, `/runs/${id}/cancel`).expect(403);
    expect(foreign.body.error.message).toMatch(/only its author or an admin may cancel it/);
    expect((await getRun(researcher, id)).status).toBe('running');
    const r = await post(admin, `/runs/${id}/cancel`).expect(200);
    expect(r.body.run.status).toBe('cancelled');
    expect(r.body.run.error).toBe('Cancelled by Ada Quarrier.');
  });
});

describe('keelson cancel-run', () => {
  let server: Server;
  let home: string;
  beforeAll(async () => {
    server = t.app.listen(0, '127.0.0.1');
    await new Promise<void>((r) => server.once('listening', () => r()));
    home = mkdtempSync(join(tmpdir(), 'keelson-cli-cancel-'));
    const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    expect((await runCli(home, ['sign-in', '--server', base, '--email', 'researcher@keelson.test'], DEMO_PASSWORD)).code).toBe(0);
  });
  afterAll(async () => {
    await new Promise<void>((r) => server.close(() => r()));
    rmSync(home, { recursive: true, force: true });
  });

  it('cancels a running run and says so; a second call fails with the server’s reason', async () => {
    const id = await heavyRunHeld(researcher);
    const r = await runCli(home, ['cancel-run', String(id)]);
    expect(r.code).toBe(0);
    expect(r.out).toBe(`Run ${id}: cancelled (Cancelled by Rhea Tolland.)\n`);
    expect((await getRun(researcher, id)).status).toBe('cancelled');
    const again = await runCli(home, ['cancel-run', String(id)]);
    expect(again.code).not.toBe(0);
    expect(again.err).toContain(`Run ${id} is cancelled; only a queued or running run can be cancelled`);
  });
});

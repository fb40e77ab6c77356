/**
 * Heavy runs off the request thread: a run whose cost T·N²·K is above the threshold is answered 202
 * `queued` (Location to poll) and estimated in the embedded worker pool; smaller runs keep 201.
 * Data: the invented economy of runs-fixture.ts (T = 240, N = 10): K = 1 costs 24,000, K = 2
 * 48,000, so a threshold of 30,000 splits them.
 *
 * Checks against outside sources: the heavy run's stored result is compared byte for byte with the
 * synchronous path's (the same estimateRun on the same input, identity of the two paths), and its
 * b with lib/gmm's estimateLedger on the fixture's matrices (runs-fixture.ts fixtureLedger, as in
 * runs.test.ts); the collinear model (COMBO = MKT + ECHO by construction) must fail.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, expectEnvelope, makeTestApp, post, tableCounts, type Agent, type TestApp } from './helpers';
import { fixtureLedger, makeFixture, spec, uploadFixture, waitRun, type Fixture } from './runs-fixture';
import { createApp } from '../../server/app';
import { createRun, mailSettled } from '../../server/services/runs';
import { modelSpecSchema, type ModelSpec } from '../../shared/specs';
import { runResponseSchema, runsResponseSchema } from '../../shared/runs';
import { runs, auditLog } from '../../server/db/schema/index';
import { eq } from 'drizzle-orm';

const THRESHOLD = 30_000;
let t: TestApp;
let fx: Fixture;
let admin: Agent;
let researcher: Agent;
let reviewer: Agent;
let desk: Agent;
let edition: { libraryId: number; editionId: number };

beforeAll(async () => {
  t = await makeTestApp({ heavyRunCost: THRESHOLD });
  fx = makeFixture();
  admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  reviewer = await agentAs(t.app, 'reviewer');
  desk = await agentAs(t.app, 'desk');
  edition = await uploadFixture(admin, fx, { name: 'Invented economy', visibility: 'shared' });
});
afterAll(async () => {
  await mailSettled();
  await t.close();
});



describe('heavy runs', () => {
  it('a small run keeps the synchronous 201 with its ledger', async () => {
    const r = await post(researcher, '/runs', { editionId: edition.editionId, spec: spec({ factors: ['MKT'], rf: 'RF' }) }).expect(201);
    expect(r.headers.location).toBeUndefined();
    expect(r.body.run.status).toBe('finished');
    expect(r.body.run.result.K).toBe(1);
  });

  it('a heavy run is answered 202 queued with a Location, then finishes with the synchronous numbers bit for bit', async () => {
    const body = { editionId: edition.editionId, spec: spec({ rf: 'RF' }) };
    const r = await post(researcher, '/runs', body).expect(202);
    const queued = runResponseSchema.parse(r.body).run;
    expect(queued.status).toBe('queued');
    expect(queued.result).toBeNull();
    expect(r.headers.location).toBe(`/api/v1/runs/${queued.id}`);
    const done = await waitRun(researcher, queued.id);
    expect(done.status).toBe('finished');
    expect(done.startedAt && done.finishedAt && done.startedAt <= done.finishedAt).toBe(true);
    const heavyText = (await researcher.get(`/api/v1/runs/${queued.id}/result.json`).expect(200)).text;
    // the list's N, K, T columns are written with the worker's result (identity with the result)
    const listed = runsResponseSchema.parse((await researcher.get('/api/v1/runs').expect(200)).body).runs.find((x) => x.id === queued.id)!;
    expect([listed.N, listed.K, listed.T]).toEqual([done.result!.N, done.result!.K, done.result!.T]);

    // the synchronous path (no launcher) on the same spec and edition
    const user = { id: queued.authorId, name: queued.authorName, email: 'researcher@keelson.test', role: 'researcher' as const };
    const sync = createRun({ db: t.db, mailer: t.mailer, runner: t.app.jobRunner }, user as never, { editionId: edition.editionId, spec: modelSpecSchema.parse(body.spec) as ModelSpec });
    expect(sync.status).toBe('finished');
    const syncText = t.db.select({ result: runs.result }).from(runs).where(eq(runs.id, sync.id)).get()!.result;
    expect(heavyText).toBe(syncText);

    // independent reference: estimateLedger on the fixture's excess returns (runs-fixture.ts fixtureLedger)
    const ref = fixtureLedger(fx, ['MKT', 'ECHO']);
    expect(done.result!.factors.map((f) => f.b)).toEqual(ref.factors.map((f) => f.b));

    // audit: queued at the request, finished on the worker
    const actions = t.db.select({ action: auditLog.action, detail: auditLog.detail }).from(auditLog).all().filter((a) => a.detail?.includes(`"runId":${queued.id}`));
    expect(actions.map((a) => a.action)).toEqual(['run.queued', 'run.finished']);
  });

  it('the basis change and the first-stage copy of a heavy run are queued too (202)', async () => {
    const first = await waitRun(researcher, (await post(researcher, '/runs', { editionId: edition.editionId, spec: spec({ rf: 'RF' }) }).expect(202)).body.run.id);
    const b = await post(researcher, `/runs/${first.id}/basis`, { basis: 'robust' }).expect(422); // second-stage: robust needs a first-stage copy
    expectEnvelope(b.body, 'unprocessable');
    const copy = await post(researcher, `/runs/${first.id}/first-stage-copy`, {}).expect(202);
    expect(copy.body.run.status).toBe('queued');
    expect(copy.headers.location).toBe(`/api/v1/runs/${copy.body.run.id}`);
    expect((await waitRun(researcher, copy.body.run.id)).status).toBe('finished');
    const basis = await post(researcher, `/runs/${copy.body.run.id}/basis`, { basis: 'standard' }).expect(202);
    expect((await waitRun(researcher, basis.body.run.id)).status).toBe('finished');
  });

  it('bad input still gets the 4xx of today and writes nothing, however large', async () => {
    const before = tableCounts(t.db);
    expectEnvelope((await post(researcher, '/runs', { editionId: edition.editionId, spec: spec({ factors: ['MKT', 'NOPE'] }) }).expect(422)).body, 'unprocessable');
    expectEnvelope((await post(researcher, '/runs', { editionId: edition.editionId, spec: spec({ bootstrap: { draws: 99, scheme: 'block', blockLength: 121 } }) }).expect(422)).body, 'unprocessable');
    expect(tableCounts(t.db)).toEqual(before);
  });

  it('roles: reviewer and desk are refused (403) and nothing is written; admin may start heavy runs', async () => {
    const before = tableCounts(t.db);
    for (const a of [reviewer, desk]) expectEnvelope((await post(a, '/runs', { editionId: edition.editionId, spec: spec({ rf: 'RF' }) }).expect(403)).body, 'forbidden');
    expect(tableCounts(t.db)).toEqual(before);
    const r = await post(admin, '/runs', { editionId: edition.editionId, spec: spec({ rf: 'RF' }) }).expect(202);
    expect((await waitRun(admin, r.body.run.id)).status).toBe('finished');
  });

  it('a heavy run the data refuse (collinear factors) ends failed with the reason', async () => {
    const r = await post(researcher, '/runs', { editionId: edition.editionId, spec: spec({ factors: ['MKT', 'ECHO', 'COMBO'] }) }).expect(202);
    const run = await waitRun(researcher, r.body.run.id);
    expect(run.status).toBe('failed');
    expect(run.error).toMatch(/COMBO/);
    expect(run.result).toBeNull();
    const actions = t.db.select({ action: auditLog.action, detail: auditLog.detail }).from(auditLog).all().filter((a) => a.detail?.includes(`"runId":${run.id}`));
    expect(actions.map((a) => a.action)).toEqual(['run.queued', 'run.failed']);
  });

  it('a heavy run with bootstrap p-values starts its bootstrap job when the ledger is written', async () => {
    const r = await post(researcher, '/runs', { editionId: edition.editionId, spec: spec({ rf: 'RF', basis: 'bootstrap', bootstrap: { draws: 99, seed: 3 } }) }).expect(202);
    expect(r.body.run.bootstrapJobId).toBeNull();
    const run = await waitRun(researcher, r.body.run.id);
    expect(run.status).toBe('finished');
    expect(run.bootstrapJobId).not.toBeNull();
  });

  it('restart: a run left running by a stopped process is estimated again by the next one', async () => {
    const r = await post(researcher, '/runs', { editionId: edition.editionId, spec: spec({ rf: 'RF' }) }).expect(202);
    const id = r.body.run.id as number;
    // the first process stops before the estimation is written
    await t.app.runEstimator.close();
    const left = t.db.select({ status: runs.status }).from(runs).where(eq(runs.id, id)).get()!;
    expect(['queued', 'running']).toContain(left.status);
    const next = createApp({ db: t.db, mailer: t.mailer, sessionSecret: 'test-secret-test-secret', heavyRunCost: THRESHOLD });
    try {
      expect(next.runEstimator.relaunch()).toBeGreaterThanOrEqual(1);
      await next.runEstimator.waitFor(id);
      const row = t.db.select({ status: runs.status, result: runs.result }).from(runs).where(eq(runs.id, id)).get()!;
      expect(row.status).toBe('finished');
      expect(JSON.parse(row.result!).K).toBe(2);
    } finally {
      next.close();
      await next.closed();
    }
  });
});

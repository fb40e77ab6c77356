/**
 * Heavy runs in queue mode: with KEELSON_REDIS_URL set, a run above the cost threshold is answered
 * 202 and estimated by a `keelson worker` process as one BullMQ job run-<id> on a real Debian
 * redis-server. Check (an identity): the stored result is byte for byte the synchronous path's on
 * the same spec and edition. Data: the invented economy of tests/api/runs-fixture.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Redis } from 'ioredis';
import { eq } from 'drizzle-orm';
import type { Agent } from '../api/helpers';
import { spec, waitRun } from '../api/runs-fixture';
import { createRun } from '../../server/services/runs';
import { runs } from '../../server/db/schema/index';
import { inputKey, runJobId } from '../../server/jobs/queue-shared';
import { modelSpecSchema } from '../../shared/specs';
import { startQueueLibraryTest, type QueueTestApp, stopQueueTest, type WorkerProcess } from './redis';

let q: QueueTestApp;
let researcher: Agent;
let editionId: number;
let worker: WorkerProcess;

beforeAll(async () => {
  // T = 240, N = 10, K = 2 costs 48,000: above this threshold
  ({ q, researcher, editionId, worker } = await startQueueLibraryTest('keelson-heavy-', { heavyRunCost: 30_000, runPollMs: 50 }, { offsetIds: 'runs' }));
}, 60_000);

afterAll(() => stopQueueTest({ workers: worker ? [worker] : [], ...q }));


describe('heavy runs in queue mode', () => {
  it('a heavy run goes to a worker as job run-<id> and comes back with the synchronous numbers bit for bit', async () => {
    const body = { editionId, spec: spec({ rf: 'RF' }) };
    const r = await researcher.post('/api/v1/runs').set('x-csrf-token', researcher.csrf).send(body).expect(202);
    const id = r.body.run.id as number;
    expect(r.headers.location).toBe(`/api/v1/runs/${id}`);
    const done = await waitRun(researcher, id);
    expect(done.status).toBe('finished');
    const heavyText = q.db.select({ result: runs.result }).from(runs).where(eq(runs.id, id)).get()!.result;

    const user = { id: done.authorId, name: done.authorName, email: 'researcher@keelson.test', role: 'researcher' as const };
    const sync = createRun({ db: q.db, mailer: q.mailer, runner: q.app.jobRunner }, user as never, { editionId, spec: modelSpecSchema.parse(body.spec) });
    const syncText = q.db.select({ result: runs.result }).from(runs).where(eq(runs.id, sync.id)).get()!.result;
    expect(heavyText).toBe(syncText);

    // the job and its stored input are removed from Redis once the result is in SQLite
    const r2 = new Redis(q.url);
    try {
      expect(await r2.exists(inputKey(runJobId(id)))).toBe(0);
      expect(await r2.exists(`keelson:deep-checks:${runJobId(id)}`)).toBe(0);
    } finally {
      r2.disconnect();
    }
  }, 90_000);

  it('a heavy run the data refuse ends failed with the worker’s reason', async () => {
    const r = await researcher
      .post('/api/v1/runs')
      .set('x-csrf-token', researcher.csrf)
      .send({ editionId, spec: spec({ factors: ['MKT', 'ECHO', 'COMBO'] }) })
      .expect(202);
    const run = await waitRun(researcher, r.body.run.id as number);
    expect(run.status).toBe('failed');
    expect(run.error).toMatch(/COMBO/);
  }, 90_000);
});

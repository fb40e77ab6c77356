/**
 * Queue mode's bigger sweeps: with KEELSON_REDIS_URL set the API allows 25 sweep candidates
 * (GET /jobs/limits says so), and a 20-candidate sweep (1,048,575 models) on the wide invented
 * economy (tests/api/runs-fixture.ts makeWideFixture) runs as a BullMQ flow of 8 mask-range
 * chunks on two real `keelson worker` processes over a real redis-server, each chunk answering a
 * bounded partial. Check (identity): the result equals lib/gmm's subsetSweep called directly,
 * uninterrupted and unchunked, on the same matrices, as the JSON the API serves.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, expectEnvelope, type Agent, post } from '../api/helpers';
import { directWideSweep, getJob, jobEnded, makeWideFixture, spec, uploadFixture, waitJob } from '../api/runs-fixture';
import { chunkRanges } from '../../server/jobs/runner';
import { jobLimitsResponseSchema, jobResponseSchema } from '../../shared/jobs';
import { runResponseSchema } from '../../shared/runs';
import { startQueueTestApp, type QueueTestApp, startWorkerProcess, stopQueueTest, type WorkerProcess } from './redis';

let q: QueueTestApp;
let researcher: Agent;
let runId: number;
const workers: WorkerProcess[] = [];
const wide = makeWideFixture(20, 25);

beforeAll(async () => {
  // job ids (hence flow ids job-<id>-<attempt>) far from the other queue tests'
  q = await startQueueTestApp('keelson-sweep25-', { jobMailAfterMs: 3_600_000 }, { offsetIds: 'jobs' });
  const admin = await agentAs(q.app, 'admin');
  researcher = await agentAs(q.app, 'researcher');
  const lib = await uploadFixture(admin, wide.fx, { name: 'Wide invented economy', visibility: 'shared' }, wide.kinds);
  const r = await post(researcher, '/runs', { editionId: lib.editionId, spec: spec({ assets: wide.assets, factors: ['W01'] }) });
  if (r.status !== 201) throw new Error(`run not started: ${r.status} ${JSON.stringify(r.body)}`);
  runId = runResponseSchema.parse(r.body).run.id;
  workers.push(await startWorkerProcess(q.url), await startWorkerProcess(q.url));
}, 60_000);

afterAll(() => stopQueueTest({ workers, ...q }));


describe('sweep limits with queue workers', () => {
  it('GET /jobs/limits: queue mode, 25 candidates, 100,000 draws', async () => {
    const { limits } = jobLimitsResponseSchema.parse((await researcher.get('/api/v1/jobs/limits').expect(200)).body);
    expect(limits).toMatchObject({ mode: 'queue', sweepCandidates: 25, bootstrapDraws: 100_000 });
  });

  it('26 candidates are refused (400), naming both modes’ limits', async () => {
    const names = [...wide.factors, ...Array.from({ length: 9 }, (_, i) => `X${i}`)];
    const res = await post(researcher, `/runs/${runId}/checks`, { kind: 'subset-sweep', params: { candidates: names } }).expect(400);
    expectEnvelope(res.body, 'validation_failed');
    expect(JSON.stringify(res.body)).toMatch(/at most 15 candidate factors without workers; 25 with queue workers/);
  });

  it('20 candidates (1,048,575 models, 8 chunks) on two workers equal lib/gmm’s one-pass sweep', async () => {
    const cands = wide.factors;
    expect(chunkRanges(2 ** 20 - 1, 'subset-sweep')).toHaveLength(8);
    const r = await post(researcher, `/runs/${runId}/checks`, { kind: 'subset-sweep', params: { candidates: cands } });
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    const job = jobResponseSchema.parse(r.body).job;
    expect(job.total).toBe(1_048_575);
    const fin = await waitJob(researcher, job.id, jobEnded, 40_000, 200);
    expect(fin.status, fin.error ?? '').toBe('finished');
    const direct = directWideSweep(wide, cands);
    const served = (await getJob(researcher, job.id)).result;
    // toEqual compares numbers with Object.is: every double as lib/gmm gave it
    expect(served).toEqual(JSON.parse(JSON.stringify(direct)));
    expect(direct.models).toBe(1_048_575);
    expect(direct.bestByHj[0].models[0].factors).toEqual(['W01']);
    expect(direct.thetaRanking).not.toBeNull();
  }, 45_000);
});

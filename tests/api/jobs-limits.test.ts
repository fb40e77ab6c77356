/**
 * Deep-check limits per mode, embedded (no KEELSON_REDIS_URL): GET /jobs/limits for every role
 * (401 signed out), and the service's refusal of a sweep above 15 candidates with a 422 naming the
 * limit and the mode, writing nothing; a 15-candidate sweep on the wide invented economy
 * (runs-fixture.ts makeWideFixture, 32,767 models) runs in ~200-chunk ranges and equals lib/gmm's
 * subsetSweep called directly (identity). The queue mode's 25 is checked in tests/queue/sweep-25.test.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, anonymousAgent, expectEnvelope, makeTestApp, tableCounts, type Agent, type TestApp, post } from './helpers';
import { directWideSweep, getJob, jobEnded, makeWideFixture, spec, uploadFixture, waitJob } from './runs-fixture';
import { mailSettled } from '../../server/services/runs';
import { chunkRanges, SWEEP_MIN_CHUNK } from '../../server/jobs/runner';
import { JOB_LIMITS, jobLimitsResponseSchema, jobResponseSchema } from '../../shared/jobs';
import { runResponseSchema } from '../../shared/runs';
import { ROLES } from '../../shared/roles';

let t: TestApp;
let researcher: Agent;
let runId: number;
const wide = makeWideFixture(17, 20);

beforeAll(async () => {
  t = await makeTestApp({ jobMailAfterMs: 3_600_000 });
  const admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  const lib = await uploadFixture(admin, wide.fx, { name: 'Wide invented economy', visibility: 'shared' }, wide.kinds);
  const r = await post(researcher, '/runs', { editionId: lib.editionId, spec: spec({ assets: wide.assets, factors: ['W01'] }) });
  if (r.status !== 201) throw new Error(`run not started: ${r.status} ${JSON.stringify(r.body)}`);
  runId = runResponseSchema.parse(r.body).run.id;
}, 60_000);
afterAll(async () => {
  await mailSettled();
  await t.app.jobRunner.close();
  await t.close();
});


describe('GET /jobs/limits (embedded)', () => {
  it('every signed-in role reads the embedded limits; signed out is 401', async () => {
    for (const role of ROLES) {
      const agent = await agentAs(t.app, role);
      const res = await agent.get('/api/v1/jobs/limits').expect(200);
      const { limits } = jobLimitsResponseSchema.parse(res.body);
      expect(limits.mode).toBe('embedded');
      expect(limits.sweepCandidates).toBe(15);
      expect(limits.bootstrapDraws).toBe(JOB_LIMITS.embedded.bootstrapDraws);
      expect(limits.byMode.queue.sweepCandidates).toBe(25);
      expect(limits.byMode.queue.bootstrapDraws).toBe(100_000);
    }
    const anon = await anonymousAgent(t.app);
    expectEnvelope((await anon.get('/api/v1/jobs/limits').expect(401)).body, 'unauthenticated');
  });
});

describe('sweep candidates without workers', () => {
  it('16 candidates: 422 naming the limit and the mode, nothing written', async () => {
    await mailSettled();
    const before = tableCounts(t.db);
    const res = await post(researcher, `/runs/${runId}/checks`, { kind: 'subset-sweep', params: { candidates: wide.factors.slice(0, 16) } }).expect(422);
    expectEnvelope(res.body, 'unprocessable');
    expect(res.body.error.message).toMatch(/at most 15 candidate factors without workers; 25 with queue workers/);
    expect(res.body.error.message).toMatch(/without workers, so name up to 15 candidates \(this request has 16\)/);
    expect(res.body.error.issues[0].path).toEqual(['params', 'candidates']);
    // 26: above every mode's limit, the shared schema refuses (400)
    const over = await post(researcher, `/runs/${runId}/checks`, { kind: 'subset-sweep', params: { candidates: [...wide.factors, ...Array.from({ length: 9 }, (_, i) => `X${i}`)] } }).expect(400);
    expectEnvelope(over.body, 'validation_failed');
    expect(JSON.stringify(over.body)).toMatch(/at most 15 candidate factors without workers; 25 with queue workers/);
    // draws above the largest limit: 400
    expectEnvelope((await post(researcher, `/runs/${runId}/checks`, { kind: 'bootstrap', params: { draws: 100_001 } }).expect(400)).body, 'validation_failed');
    expect(tableCounts(t.db)).toEqual(before);
  });

  it('15 candidates run (32,767 models, one chunk) and equal lib/gmm’s sweep', async () => {
    const cands = wide.factors.slice(0, 15);
    const r = await post(researcher, `/runs/${runId}/checks`, { kind: 'subset-sweep', params: { candidates: cands } }).expect(201);
    const job = jobResponseSchema.parse(r.body).job;
    expect(job.total).toBe(32_767);
    expect(chunkRanges(32_767, 'subset-sweep')).toEqual([[0, 32_767]]);
    const fin = await waitJob(researcher, job.id, jobEnded, 60_000, 100);
    expect(fin.status, fin.error ?? '').toBe('finished');
    const direct = directWideSweep(wide, cands);
    expect((await getJob(researcher, job.id)).result).toEqual(JSON.parse(JSON.stringify(direct)));
    // known truth of the wide economy: W01 alone prices the assets
    expect(direct.bestByHj[0].models[0].factors).toEqual(['W01']);
  }, 60_000);
});

describe('chunking of big sweeps', () => {
  it('at most 200 mask ranges, at least SWEEP_MIN_CHUNK (131,072) masks each, covering every mask once', () => {
    expect(SWEEP_MIN_CHUNK).toBe(131_072);
    for (const [K, chunks] of [[10, 1], [15, 1], [17, 1], [18, 2], [20, 8], [22, 32], [24, 128], [25, 200]] as const) {
      const total = 2 ** K - 1;
      const r = chunkRanges(total, 'subset-sweep');
      expect(r[0][0]).toBe(0);
      expect(r[r.length - 1][1]).toBe(total);
      for (let i = 1; i < r.length; i++) expect(r[i][0]).toBe(r[i - 1][1]);
      expect(r.length).toBe(chunks);
      for (const [a, b] of r.slice(0, -1)) expect(b - a).toBeGreaterThanOrEqual(131_072);
    }
  });
});

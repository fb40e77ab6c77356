/**
 * The deep-check result schemas (shared/deep-check-results.ts) against real job results: each kind
 * runs through the job runner (real worker threads, the seeded invented economy of
 * runs-fixture.ts) and the raw JSON the API sends is parsed with the schemas. The parsed value
 * must equal the raw body (zod strips unknown keys, so a field the schema forgot would show up as
 * a difference), and malformed results are refused.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, makeTestApp, type Agent, type TestApp, post } from './helpers';
import { makeFixture, spec, uploadFixture } from './runs-fixture';
import { mailSettled } from '../../server/services/runs';
import { jobResponseSchema, type JobKind } from '../../shared/jobs';
import { runResponseSchema } from '../../shared/runs';
import {
  bootstrapResultSchema,
  holdoutJobResultSchema,
  rollingPointSchema,
  rollingResultSchema,
  subsetSweepResultSchema,
} from '../../shared/deep-check-results';

let t: TestApp;
let researcher: Agent;
let runId: number;


beforeAll(async () => {
  t = await makeTestApp();
  const admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  const shared = await uploadFixture(admin, makeFixture(), { name: 'Invented economy', visibility: 'shared' });
  const r = await post(researcher, '/runs', { editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
  if (r.status !== 201) throw new Error(`run not started: ${r.status} ${JSON.stringify(r.body)}`);
  runId = runResponseSchema.parse(r.body).run.id;
});
afterAll(async () => {
  await mailSettled();
  await t.app.jobRunner.close();
  await t.close();
});

/** Starts a check and returns the raw (unparsed) body of the finished job. */
async function rawFinished(body: { kind: JobKind; params: Record<string, unknown> }): Promise<{ job: Record<string, unknown> & { result: unknown } }> {
  const r = await post(researcher, `/runs/${runId}/checks`, body);
  if (r.status !== 201) throw new Error(`check not started: ${r.status} ${JSON.stringify(r.body)}`);
  const id = (r.body as { job: { id: number } }).job.id;
  const end = Date.now() + 60_000;
  for (;;) {
    const g = await researcher.get(`/api/v1/jobs/${id}`).expect(200);
    const job = (g.body as { job: Record<string, unknown> & { result: unknown } }).job;
    if (!['queued', 'running'].includes(String(job.status))) {
      expect(job.status).toBe('finished');
      return g.body as { job: Record<string, unknown> & { result: unknown } };
    }
    if (Date.now() > end) throw new Error(`job ${id} stuck`);
    await new Promise((res) => setTimeout(res, 50));
  }
}

const cases = [
  { name: 'bootstrap', body: { kind: 'bootstrap', params: { draws: 19, seed: 7 } }, schema: bootstrapResultSchema },
  { name: 'block bootstrap', body: { kind: 'bootstrap', params: { draws: 19, seed: 7, scheme: 'block' } }, schema: bootstrapResultSchema },
  { name: 'subset sweep', body: { kind: 'subset-sweep', params: { candidates: ['MKT', 'ECHO', 'CLIMA'] } }, schema: subsetSweepResultSchema },
  { name: 'rolling windows', body: { kind: 'rolling', params: { window: 'rolling', length: 120, step: 60 } }, schema: rollingResultSchema },
  { name: 'expanding windows', body: { kind: 'rolling', params: { window: 'expanding', length: 100, step: 35 } }, schema: rollingResultSchema },
  { name: 'hold-out split', body: { kind: 'holdout', params: { mode: 'split', fraction: 0.7 } }, schema: holdoutJobResultSchema },
  { name: 'rolling hold-out', body: { kind: 'holdout', params: { mode: 'rolling', length: 120, step: 60 } }, schema: holdoutJobResultSchema },
] as const;

const results = new Map<string, { job: Record<string, unknown> & { result: unknown } }>();

describe('deep-check result schemas parse what the job runner produces', () => {
  for (const c of cases)
    it(`${c.name}: the kind's schema and the job schema accept it and drop nothing`, async () => {
      const raw = await rawFinished(c.body);
      results.set(c.name, raw);
      expect(raw.job.result).not.toBeNull();
      expect(c.schema.parse(raw.job.result)).toEqual(raw.job.result);
      const parsed = jobResponseSchema.parse(raw);
      expect(parsed).toEqual(raw);
      expect(parsed.job.kind).toBe(c.body.kind);
    });
});

describe('malformed results are refused', () => {
  const clone = <T>(x: T): T => JSON.parse(JSON.stringify(x)) as T;

  it('a missing field, a wrong type, a null statistic and an unknown hold-out mode', () => {
    const boot = clone(results.get('bootstrap')!.job.result) as Record<string, unknown>;
    delete boot.J;
    expect(bootstrapResultSchema.safeParse(boot).success).toBe(false);

    const sweep = clone(results.get('subset sweep')!.job.result) as { models: unknown };
    sweep.models = '7';
    expect(subsetSweepResultSchema.safeParse(sweep).success).toBe(false);

    // NaN and ±Infinity become null in JSON: a null b̂ must not pass as a number
    const roll = clone(results.get('rolling windows')!.job.result) as { points: { b: (number | null)[] }[] };
    roll.points[0].b[0] = null;
    expect(rollingResultSchema.safeParse(roll).success).toBe(false);

    const hold = clone(results.get('hold-out split')!.job.result) as { mode: string };
    hold.mode = 'sideways';
    expect(holdoutJobResultSchema.safeParse(hold).success).toBe(false);
  });

  it('a job whose result does not match its kind is refused by the job schema', () => {
    const raw = clone(results.get('bootstrap')!);
    raw.job.result = clone(results.get('rolling windows')!.job.result);
    const r = jobResponseSchema.safeParse(raw);
    expect(r.success).toBe(false);
    // the same job with its own result parses
    expect(jobResponseSchema.safeParse(results.get('bootstrap')!).success).toBe(true);
  });
});

describe('rolling rows stored before the one failure shape', () => {
  it('a failed window with a free-text reason reads as code not-defined with that text; a good row is unchanged', () => {
    const base = { start: 0, end: 119, startDate: '2000-01', endDate: '2009-12', b: [1], seB: [0.5], tB: [2], lambda: [0.01], seLambda: [0.005], tLambda: [2], J: 3, pJ: 0.4 };
    const old = rollingPointSchema.parse({ ...base, ok: false, reason: 'The factor MKT is constant in this window' });
    expect(old).toMatchObject({ ok: false, code: 'not-defined', message: 'The factor MKT is constant in this window' });
    expect('reason' in (old as object)).toBe(false);
    expect(rollingPointSchema.parse({ ...base, ok: true })).toEqual({ ...base, ok: true });
    // a row with neither code nor reason is still refused
    expect(rollingPointSchema.safeParse({ ...base, ok: false }).success).toBe(false);
  });
});

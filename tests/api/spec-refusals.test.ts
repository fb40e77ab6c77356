/**
 * Impossible specs are refused the same way everywhere, with one message and nothing saved: the
 * form's own check (shared/specs.ts checkSpecAgainstEdition), POST /specs/check, POST /specs,
 * PUT /specs/:id and POST /runs.
 *
 * Rules (methods.md and the spec contract): N < K is refused ("fewer test assets than factors";
 * N = K is allowed, exactly identified, and then J = 0 — an identity the methods contract lists);
 * a HAC lag L ≥ T/4 is refused with the largest allowed lag named; a lag that is not a whole
 * number (1.5, the text "5") gets a message saying so; the robust basis on a second-stage or
 * iterated spec is refused (400).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, expectEnvelope, makeTestApp, tableCounts, type Agent, type TestApp } from './helpers';
import { FIX_KINDS, makeFixture, spec, uploadFixture, type Fixture } from './runs-fixture';
import { mailSettled } from '../../server/services/runs';
import { autoLag, checkSpecAgainstEdition, maxLagFor, modelSpecSchema, type EditionShape } from '../../shared/specs';
import { defaultLag, maxLag } from '../../lib/gmm/index';
import { runResponseSchema } from '../../shared/runs';

let t: TestApp;
let fx: Fixture;
let researcher: Agent;
let shared: { libraryId: number; editionId: number };
let specId: number;
let edition: EditionShape;

beforeAll(async () => {
  t = await makeTestApp();
  fx = makeFixture();
  const admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  shared = await uploadFixture(admin, fx, { name: 'Invented economy', visibility: 'shared' });
  const s = await send('post', '/specs', { name: 'Editable', editionId: shared.editionId, spec: spec({ rf: 'RF' }) });
  specId = s.body.spec.id as number;
  edition = { dates: fx.dates, series: Object.keys(fx.cols).map((name) => ({ name, kind: FIX_KINDS[name]?.kind ?? 'asset' })) };
});
afterAll(async () => {
  await mailSettled();
  await t.close();
});

function send(method: 'post' | 'put', url: string, body: unknown) {
  return researcher[method](`/api/v1${url}`).set('x-csrf-token', researcher.csrf).send(body as object);
}

/**
 * Sends one misfit spec (valid shape, does not fit the edition) to every place that checks it and
 * returns the messages; asserts 422 on the writes and that nothing was written.
 */
async function refusedEverywhere(over: Record<string, unknown>): Promise<string> {
  const s = spec(over);
  const form = checkSpecAgainstEdition(modelSpecSchema.parse(s), edition);
  expect(form.issues.length, 'the form’s check').toBeGreaterThan(0);
  const message = form.issues[0].message;
  await mailSettled();
  const before = tableCounts(t.db);
  const check = await send('post', '/specs/check', { editionId: shared.editionId, spec: s });
  expect(check.status).toBe(200);
  expect(check.body.check.issues[0].message).toBe(message);
  const writes = [
    await send('post', '/specs', { name: 'Impossible', editionId: shared.editionId, spec: s }),
    await send('put', `/specs/${specId}`, { spec: s }),
    await send('post', '/runs', { editionId: shared.editionId, spec: s }),
  ];
  for (const r of writes) {
    expect(r.status, JSON.stringify(r.body)).toBe(422);
    const e = expectEnvelope(r.body, 'unprocessable');
    expect(e.message).toContain(message);
  }
  expect(tableCounts(t.db)).toEqual(before);
  return message;
}

/** A spec refused by its shape (400) on every write and by the check route; nothing saved. */
async function malformedEverywhere(over: Record<string, unknown>): Promise<string> {
  const s = spec(over);
  const parsed = modelSpecSchema.safeParse(s);
  expect(parsed.success, 'the form’s schema').toBe(false);
  const message = parsed.error!.issues[0].message;
  await mailSettled();
  const before = tableCounts(t.db);
  const rs = [
    await send('post', '/specs/check', { editionId: shared.editionId, spec: s }),
    await send('post', '/specs', { name: 'Impossible', editionId: shared.editionId, spec: s }),
    await send('put', `/specs/${specId}`, { spec: s }),
    await send('post', '/runs', { editionId: shared.editionId, spec: s }),
  ];
  for (const r of rs) {
    expect(r.status, JSON.stringify(r.body)).toBe(400);
    expect(expectEnvelope(r.body, 'validation_failed').message).toContain(message);
  }
  expect(tableCounts(t.db)).toEqual(before);
  return message;
}

describe('fewer test assets than factors', () => {
  it('N < K is refused with one message everywhere; nothing (no spec, no failed run) is saved', async () => {
    const msg = await refusedEverywhere({ assets: ['A01'], factors: ['MKT', 'ECHO'] });
    expect(msg).toMatch(/^Fewer test assets than factors: N = 1 test asset, K = 2 factors/);
    expect(msg).toMatch(/N = K is allowed/);
    expect(msg).not.toMatch(/−1|-1 degrees/);
    const three = await refusedEverywhere({ assets: ['A01', 'A02'], factors: ['MKT', 'ECHO', 'CLIMA'], nonTraded: ['CLIMA'] });
    expect(three).toMatch(/N = 2 test assets, K = 3 factors/);
  });

  it('N = K is allowed (exactly identified): the run finishes with J = 0 on 0 degrees of freedom', async () => {
    const s = spec({ assets: ['A01', 'A02'], factors: ['MKT', 'ECHO'], rf: 'RF' });
    expect(checkSpecAgainstEdition(modelSpecSchema.parse(s), edition).issues).toEqual([]);
    const r = await send('post', '/runs', { editionId: shared.editionId, spec: s });
    expect(r.status).toBe(201);
    const run = runResponseSchema.parse(r.body).run;
    expect(run.status).toBe('finished');
    expect(run.result!.J.df).toBe(0);
    // identity (methods.md): an exactly identified model prices the assets exactly, J = 0
    expect(Math.abs(run.result!.J.stat)).toBeLessThan(1e-12);
  });
});

describe('HAC lag limits', () => {
  it('refuses L ≥ T/4 naming the largest allowed lag; the largest allowed lag runs', async () => {
    const w60 = { start: fx.dates[0], end: fx.dates[59] }; // T = 60, T/4 = 15
    expect(maxLagFor(60)).toBe(14);
    const m15 = await refusedEverywhere({ lags: 15, window: w60 });
    expect(m15).toBe('A HAC lag of 15 is too long for T = 60 periods: the lag must be below T/4 = 15, so the largest allowed is 14');
    await refusedEverywhere({ lags: 100, window: w60 });
    const ok = await send('post', '/runs', { editionId: shared.editionId, spec: spec({ lags: 14, window: w60 }) });
    expect(ok.status).toBe(201);
    expect(ok.body.run.result.lags).toBe(14);
    // T = 61: T/4 = 15.25, so 15 is allowed and 16 is not
    const w61 = { start: fx.dates[0], end: fx.dates[60] };
    expect(maxLagFor(61)).toBe(15);
    expect(await refusedEverywhere({ lags: 16, window: w61 })).toMatch(/below T\/4 = 15\.25, so the largest allowed is 15$/);
    expect((await send('post', '/runs', { editionId: shared.editionId, spec: spec({ lags: 15, window: w61 }) })).status).toBe(201);
  });

  it('the form’s automatic lag is lib/gmm’s plug-in rule, and it stays below T/4 from T = 9 on', () => {
    for (let T = 1; T <= 5000; T++) {
      expect(autoLag(T)).toBe(defaultLag(T));
      expect(maxLagFor(T)).toBe(maxLag(T)); // lib/gmm refuses the same lags (hac.ts resolveLag)
    }
    // floor(4 (T/100)^(2/9)): T = 8 gives 2 = T/4 (refused), T = 9 gives 2 < 2.25
    expect(autoLag(8)).toBe(2);
    for (let T = 9; T <= 5000; T++) expect(autoLag(T)).toBeLessThanOrEqual(maxLagFor(T));
  });

  it('a lag that is not a whole number (1.5, the text "5", the text "six") is refused saying a whole number is needed', async () => {
    const a = await malformedEverywhere({ lags: 1.5 });
    expect(a).toMatch(/whole number/);
    expect(a).toMatch(/1\.5 is not a whole number/);
    const b = await malformedEverywhere({ lags: '5' });
    expect(b).toMatch(/whole number/);
    expect(b).toMatch(/send 5 as a number, not as the text "5"/);
    expect(await malformedEverywhere({ lags: 'six' })).toMatch(/whole number.*"six"/);
    expect(await malformedEverywhere({ lags: '2.5' })).toMatch(/2\.5 is not a whole number/);
    expect(await malformedEverywhere({ lags: -1 })).toMatch(/0 or more/);
    expect(modelSpecSchema.parse(spec({ lags: 'auto' })).lags).toBe('auto');
  });
});

describe('robust basis on a second-stage or iterated spec', () => {
  it('is refused (400) everywhere with a message that says what to do', async () => {
    for (const stage of ['second', 'iterated']) {
      const m = await malformedEverywhere({ stage, basis: 'robust' });
      expect(m).toMatch(/robust basis needs a first-stage run/);
      expect(m).toMatch(/Set the stage to first, or choose the standard or bootstrap basis/);
    }
    const ok = await send('post', '/runs', { editionId: shared.editionId, spec: spec({ stage: 'first', basis: 'robust', rf: 'RF' }) });
    expect(ok.status).toBe(201);
  });
});

describe('several problems at once', () => {
  it('lists every issue in the 422 envelope, the first one in the message', async () => {
    const r = await send('post', '/specs', { name: 'x', editionId: shared.editionId, spec: spec({ assets: ['A01'], factors: ['MKT', 'ECHO'], lags: 30, window: { end: fx.dates[59] } }) });
    expect(r.status).toBe(422);
    const issues = (r.body.error.issues as { path: (string | number)[]; message: string }[]).map((i) => i.path.join('.'));
    expect(issues).toEqual(['spec.assets', 'spec.lags']);
  });
});

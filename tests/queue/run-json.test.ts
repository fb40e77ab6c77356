/**
 * GET /runs/:id serves a finished run's stored ledger without re-serialising it: the answer must
 * be exactly what serialising the run object gives (identity with the service's getRun), parse
 * with the shared response schema, and carry the stored result text verbatim.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, makeTestApp, type Agent, type TestApp } from '../api/helpers';
import { makeFixture, spec, uploadFixture } from '../api/runs-fixture';
import { getRun } from '../../server/services/runs';
import { findActiveUser } from '../../server/services/users';
import { runResponseSchema } from '../../shared/runs';

let t: TestApp;
let researcher: Agent;
let runId: number;
beforeAll(async () => {
  t = await makeTestApp();
  const admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  const lib = await uploadFixture(admin, makeFixture(), { name: 'Invented economy', visibility: 'shared' });
  const r = await researcher.post('/api/v1/runs').set('x-csrf-token', researcher.csrf).send({ editionId: lib.editionId, spec: spec({ rf: 'RF' }) });
  runId = runResponseSchema.parse(r.body).run.id;
});
afterAll(async () => {
  await t.app.jobRunner.close();
  await t.close();
});

describe('GET /runs/:id', () => {
  it('is the run object’s JSON, with the stored result text spliced in verbatim', async () => {
    const r = await researcher.get(`/api/v1/runs/${runId}`).expect(200).expect('content-type', /application\/json/);
    const stored = (t.db.$client.prepare('select result from runs where id = ?').get(runId) as { result: string }).result;
    expect(r.text.endsWith(`,"result":${stored}}}`)).toBe(true);
    const user = findActiveUser(t.db, (t.db.$client.prepare("select id from users where email = 'researcher@keelson.test'").get() as { id: number }).id)!;
    expect(r.text).toBe(JSON.stringify({ run: getRun(t.db, user, runId) }));
    expect(runResponseSchema.parse(r.body).run.status).toBe('finished');
  });
  it('a run that cannot be read is still a 404 envelope', async () => {
    const r = await researcher.get('/api/v1/runs/99999').expect(404);
    expect(r.body.error.code).toBe('not_found');
  });
});

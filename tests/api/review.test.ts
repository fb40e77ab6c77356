/** Review API: comments, sign-off requests and sign-offs; roles; e-mails in the outboxes; the /review queue. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, expectEnvelope, makeTestApp, tableCounts, type Agent, type TestApp } from './helpers';
import { makeFixture, spec, uploadFixture, waitForMail } from './runs-fixture';
import { mailSettled } from '../../server/services/runs';
import { reviewQueueSchema, runReviewResponseSchema, runsResponseSchema, type Run } from '../../shared/runs';

let t: TestApp;
let admin: Agent;
let researcher: Agent;
let reviewer: Agent;
let desk: Agent;
let run: Run;
let failed: Run;
let reviewerId: number;
let ed: { libraryId: number; editionId: number };

const post = (a: Agent, url: string, body: unknown) => a.post(`/api/v1${url}`).set('x-csrf-token', a.csrf).send(body as object);

beforeAll(async () => {
  t = await makeTestApp({ jobMailAfterMs: 0 }); // run mails go out only after a long run; threshold 0 keeps the "Run #… finished" mail checked below
  admin = await agentAs(t.app, 'admin');
  researcher = await agentAs(t.app, 'researcher');
  reviewer = await agentAs(t.app, 'reviewer');
  desk = await agentAs(t.app, 'desk');
  ed = await uploadFixture(admin, makeFixture(), { name: 'Invented economy', visibility: 'shared' });
  run = (await post(researcher, '/runs', { editionId: ed.editionId, spec: spec({ rf: 'RF' }) }).expect(201)).body.run;
  failed = (await post(researcher, '/runs', { editionId: ed.editionId, spec: spec({ factors: ['MKT', 'ECHO', 'COMBO'] }) }).expect(201)).body.run;
  reviewerId = (await reviewer.get('/api/v1/auth/me')).body.user.id;
});
afterAll(async () => {
  await mailSettled();
  await t.close();
});

describe('comments', () => {
  it('lets reviewers and admins comment; researchers and desk cannot', async () => {
    const c = await post(reviewer, `/runs/${run.id}/comments`, { text: 'Why is the lag 4?' });
    expect(c.status).toBe(201);
    expect(c.body.comment).toMatchObject({ runId: run.id, authorName: 'Ravi Okonedo', text: 'Why is the lag 4?' });
    expect((await post(admin, `/runs/${run.id}/comments`, { text: 'Auto rule.' })).status).toBe(201);
    await mailSettled();
    const before = tableCounts(t.db);
    for (const a of [researcher, desk]) expectEnvelope((await post(a, `/runs/${run.id}/comments`, { text: 'hi' }).expect(403)).body, 'forbidden');
    expectEnvelope((await post(reviewer, `/runs/${run.id}/comments`, { text: '   ' }).expect(400)).body, 'validation_failed');
    expectEnvelope((await post(reviewer, '/runs/999999/comments', { text: 'x' }).expect(404)).body, 'not_found');
    expect(tableCounts(t.db)).toEqual(before);
    for (const a of [admin, researcher, reviewer, desk]) {
      const r = runReviewResponseSchema.parse((await a.get(`/api/v1/runs/${run.id}/review`).expect(200)).body).review;
      expect(r.comments.map((x) => x.text)).toEqual(['Why is the lag 4?', 'Auto rule.']);
    }
  });
});

describe('sign-off', () => {
  it('lists reviewers for the request picker (researchers and admins)', async () => {
    const r = await researcher.get('/api/v1/review/reviewers').expect(200);
    expect(r.body.reviewers.map((x: { role: string }) => x.role).every((role: string) => role === 'reviewer' || role === 'admin')).toBe(true);
    expect(r.body.reviewers.some((x: { id: number }) => x.id === reviewerId)).toBe(true);
    expectEnvelope((await desk.get('/api/v1/review/reviewers').expect(403)).body, 'forbidden');
  });

  it('lets only the run’s author request a sign-off, from an active reviewer, and mails the reviewer', async () => {
    await mailSettled();
    const before = tableCounts(t.db);
    expectEnvelope((await post(admin, `/runs/${run.id}/signoff-requests`, { reviewerId }).expect(403)).body, 'forbidden');
    expectEnvelope((await post(desk, `/runs/${run.id}/signoff-requests`, { reviewerId }).expect(403)).body, 'forbidden');
    expectEnvelope((await post(reviewer, `/runs/${run.id}/signoff-requests`, { reviewerId }).expect(403)).body, 'forbidden');
    const deskId = (await desk.get('/api/v1/auth/me')).body.user.id;
    expectEnvelope((await post(researcher, `/runs/${run.id}/signoff-requests`, { reviewerId: deskId }).expect(422)).body, 'unprocessable');
    expectEnvelope((await post(researcher, `/runs/${failed.id}/signoff-requests`, { reviewerId }).expect(409)).body, 'conflict');
    expect(tableCounts(t.db)).toEqual(before);

    const r = await post(researcher, `/runs/${run.id}/signoff-requests`, { reviewerId, note: 'Ready for a look' });
    expect(r.status).toBe(201);
    expect(r.body.request).toMatchObject({ runId: run.id, reviewerId, requestedByName: 'Rhea Tolland', answeredAt: null });
    expectEnvelope((await post(researcher, `/runs/${run.id}/signoff-requests`, { reviewerId }).expect(409)).body, 'conflict');

    const m = await waitForMail(reviewer, new RegExp(`Sign-off requested: run #${run.id}`));
    expect(m.to).toBe('reviewer@keelson.test');
    expect(m.text).toContain('Rhea Tolland');
    expect(m.text).toContain('Ready for a look');

    const q = reviewQueueSchema.parse((await reviewer.get('/api/v1/review').expect(200)).body);
    expect(q.awaiting.map((x) => x.run.id)).toContain(run.id);
    const mine = reviewQueueSchema.parse((await researcher.get('/api/v1/review').expect(200)).body);
    expect(mine.requestedByMe.map((x) => x.run.id)).toContain(run.id);
    const listed = runsResponseSchema.parse((await desk.get('/api/v1/runs?signoff=requested').expect(200)).body).runs;
    expect(listed.map((x) => x.id)).toEqual([run.id]);
  });

  it('lets reviewers and admins sign off (not desk, not the author), closes the request, and mails the author', async () => {
    await mailSettled();
    const before = tableCounts(t.db);
    for (const a of [researcher, desk]) expectEnvelope((await post(a, `/runs/${run.id}/signoff`, { decision: 'approved' }).expect(403)).body, 'forbidden');
    expectEnvelope((await post(reviewer, `/runs/${run.id}/signoff`, { decision: 'maybe' }).expect(400)).body, 'validation_failed');
    expectEnvelope((await post(reviewer, `/runs/${failed.id}/signoff`, { decision: 'approved' }).expect(409)).body, 'conflict');
    expect(tableCounts(t.db)).toEqual(before);

    const s = await post(reviewer, `/runs/${run.id}/signoff`, { decision: 'approved', note: 'Drop tests look sound.' });
    expect(s.status).toBe(201);
    expect(s.body.signoff).toMatchObject({ runId: run.id, decision: 'approved', reviewerName: 'Ravi Okonedo' });

    const rev = runReviewResponseSchema.parse((await desk.get(`/api/v1/runs/${run.id}/review`).expect(200)).body).review;
    expect(rev.state).toBe('approved');
    expect(rev.requests[0].answeredAt).not.toBeNull();
    expect((await desk.get(`/api/v1/runs/${run.id}`).expect(200)).body.run.signoff).toBe('approved');

    const m = await waitForMail(researcher, new RegExp(`Run #${run.id} approved`));
    expect(m.to).toBe('researcher@keelson.test');
    expect(m.text).toContain('Drop tests look sound.');
    // both messages are in the admin outbox too
    const all = (await admin.get('/api/v1/admin/outbox').expect(200)).body.messages as { subject: string }[];
    expect(all.map((x) => x.subject)).toEqual(expect.arrayContaining([`Run #${run.id} approved`, `Sign-off requested: run #${run.id}`, `Run #${run.id} finished`]));

    const q = reviewQueueSchema.parse((await reviewer.get('/api/v1/review').expect(200)).body);
    expect(q.awaiting.map((x) => x.run.id)).not.toContain(run.id);
    expect(q.recent[0]).toMatchObject({ signoff: { decision: 'approved' }, run: { id: run.id } });
    expect(runsResponseSchema.parse((await desk.get('/api/v1/runs?signoff=approved').expect(200)).body).runs.map((x) => x.id)).toEqual([run.id]);
  });

  it('lets an admin ask for changes, and a new request reopens the run for sign-off', async () => {
    const c = await post(admin, `/runs/${run.id}/signoff`, { decision: 'changes-requested', note: 'Try iterated GMM.' });
    expect(c.status).toBe(201);
    expect((await desk.get(`/api/v1/runs/${run.id}`)).body.run.signoff).toBe('changes-requested');
    await waitForMail(researcher, new RegExp(`Run #${run.id} needs changes`));
    expect((await post(researcher, `/runs/${run.id}/signoff-requests`, { reviewerId })).status).toBe(201);
    expect((await desk.get(`/api/v1/runs/${run.id}`)).body.run.signoff).toBe('requested');
  });

  it('refuses a sign-off by the run’s own author (admin-authored run)', async () => {
    const own = (await post(admin, '/runs', { editionId: ed.editionId, spec: spec() }).expect(201)).body.run;
    expectEnvelope((await post(admin, `/runs/${own.id}/signoff`, { decision: 'approved' }).expect(403)).body, 'forbidden');
  });
});

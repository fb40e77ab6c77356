/**
 * Audit log paging: `GET /api/v1/admin/audit?before=&limit=` (admin only), newest first by id.
 * Checked against an independent query of the same table (raw SQL on the test database): walking
 * the pages must give every entry exactly once, in descending id order, whatever the page size.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, anonymousAgent, expectEnvelope, makeTestApp, type Agent, type TestApp } from './helpers';
import { audit } from '../../server/services/audit';
import { inTransaction } from '../../server/db/client';
import { AUDIT_PAGE_DEFAULT, AUDIT_PAGE_MAX, auditDetailLines, auditPageResponseSchema, describeAuditEntry, type AuditEntry } from '../../shared/audit';
import { makeFixture, spec, uploadFixture } from './runs-fixture';
import { mailSettled } from '../../server/services/runs';

let t: TestApp;
let admin: Agent;

const allIdsDescending = () => (t.db.$client.prepare('select id from audit_log order by id desc').all() as { id: number }[]).map((r) => r.id);

async function page(query: string) {
  return auditPageResponseSchema.parse((await admin.get(`/api/v1/admin/audit${query}`).expect(200)).body);
}

async function walk(limit: number): Promise<{ entries: AuditEntry[]; pages: number }> {
  const out: AuditEntry[] = [];
  let before: number | null | undefined;
  let pages = 0;
  do {
    const p = await page(`?limit=${limit}${before ? `&before=${before}` : ''}`);
    expect(p.entries.length).toBeLessThanOrEqual(limit);
    out.push(...p.entries);
    before = p.nextBefore;
    pages += 1;
    if (pages > 1000) throw new Error('paging does not end');
  } while (before !== null);
  return { entries: out, pages };
}

beforeAll(async () => {
  t = await makeTestApp();
  admin = await agentAs(t.app, 'admin');
  // 130 more entries of invented kinds, in one transaction like a service would write them.
  inTransaction(t.db, (tx) => {
    for (let i = 0; i < 130; i++) audit(tx, null, 'test.filler', { i });
  });
});
afterAll(async () => {
  await mailSettled();
  await t.close();
});

describe('GET /admin/audit paging', () => {
  it('walks every entry exactly once, newest first, for several page sizes (identity with a direct SQL read)', async () => {
    const expected = allIdsDescending();
    expect(expected.length).toBeGreaterThan(130);
    for (const limit of [1, 7, 50, AUDIT_PAGE_MAX]) {
      const { entries, pages } = await walk(limit);
      expect(entries.map((e) => e.id)).toEqual(expected);
      expect(pages).toBe(Math.max(1, Math.ceil(expected.length / limit)));
    }
  });

  it('answers the default page size without a limit and nextBefore = last id shown', async () => {
    const p = await page('');
    expect(p.entries.length).toBe(AUDIT_PAGE_DEFAULT);
    expect(p.nextBefore).toBe(p.entries[p.entries.length - 1].id);
    expect(p.entries.map((e) => e.id)).toEqual(allIdsDescending().slice(0, AUDIT_PAGE_DEFAULT));
  });

  it('keeps an older page stable while new entries arrive (paging by id, not offset)', async () => {
    const first = await page('?limit=10');
    const second = await page(`?limit=10&before=${first.nextBefore}`);
    // Someone signs in meanwhile: new entries land on top, the next older page does not shift.
    await agentAs(t.app, 'reviewer');
    const again = await page(`?limit=10&before=${first.nextBefore}`);
    expect(again.entries.map((e) => e.id)).toEqual(second.entries.map((e) => e.id));
    const top = await page('?limit=10');
    expect(top.entries[0].id).toBeGreaterThan(first.entries[0].id);
    expect(top.entries[0].action).toBe('auth.login');
  });

  it('ends with nextBefore null on the oldest page, and an empty page before the first id', async () => {
    const oldest = Math.min(...allIdsDescending());
    const last = await page(`?before=${oldest + 1}&limit=5`);
    expect(last.entries.map((e) => e.id)).toEqual([oldest]);
    expect(last.nextBefore).toBeNull();
    const none = await page(`?before=${oldest}`);
    expect(none).toEqual({ entries: [], nextBefore: null });
  });

  it('refuses a bad query with 400 naming the field', async () => {
    for (const [q, field] of [
      ['?limit=0', 'limit'],
      [`?limit=${AUDIT_PAGE_MAX + 1}`, 'limit'],
      ['?limit=2.5', 'limit'],
      ['?before=abc', 'before'],
      ['?before=-3', 'before'],
    ] as const) {
      const r = await admin.get(`/api/v1/admin/audit${q}`).expect(400);
      const e = expectEnvelope(r.body, 'validation_failed') as { issues?: { path: string[] }[] };
      expect(e.issues?.[0]?.path, q).toEqual([field]);
    }
  });

  it('is for admins only', async () => {
    for (const role of ['researcher', 'reviewer', 'desk'] as const) {
      const a = await agentAs(t.app, role);
      expectEnvelope((await a.get('/api/v1/admin/audit?limit=5').expect(403)).body, 'forbidden');
    }
    const anon = await anonymousAgent(t.app);
    expectEnvelope((await anon.get('/api/v1/admin/audit').expect(401)).body, 'unauthenticated');
  });
});

describe('audit entries in words', () => {
  const post = (a: Agent, url: string, body: unknown) => a.post(`/api/v1${url}`).set('x-csrf-token', a.csrf).send(body as object);

  it('gives every kind the server wrote during a working session a sentence, with names for ids', async () => {
    const researcher = await agentAs(t.app, 'researcher');
    const reviewer = await agentAs(t.app, 'reviewer');
    const users = (await admin.get('/api/v1/admin/users').expect(200)).body.users as { id: number; name: string; email: string }[];
    const idOf = (email: string) => users.find((u) => u.email === email)!.id;
    const anon = await anonymousAgent(t.app);
    await post(anon, '/auth/login', { email: 'desk@keelson.test', password: 'not-it' }).expect(401);
    await post(admin, '/admin/invitations', { email: 'tern.bollard@example.org', name: 'Tern Bollard', role: 'reviewer' }).expect(201);
    await admin.patch(`/api/v1/admin/users/${idOf('desk@keelson.test')}`).set('x-csrf-token', admin.csrf).send({ role: 'reviewer' }).expect(200);
    await admin.patch(`/api/v1/admin/users/${idOf('desk@keelson.test')}`).set('x-csrf-token', admin.csrf).send({ role: 'desk', active: false }).expect(200);
    const ed = await uploadFixture(admin, makeFixture(), { name: 'Invented economy', visibility: 'shared' });
    const saved = (await post(researcher, '/specs', { name: 'One factor', editionId: ed.editionId, spec: spec({ rf: 'RF' }) }).expect(201)).body;
    const specId = (saved.spec ?? saved).id as number;
    const run = (await post(researcher, '/runs', { specId }).expect(201)).body.run as { id: number };
    await post(reviewer, `/runs/${run.id}/comments`, { text: 'Why this lag?' }).expect(201);
    await post(researcher, `/runs/${run.id}/signoff-requests`, { reviewerId: idOf('reviewer@keelson.test'), note: 'Ready' }).expect(201);
    await post(reviewer, `/runs/${run.id}/signoff`, { decision: 'changes-requested' }).expect(201);
    await post(reviewer, '/auth/logout', {}).expect(204);

    const names = new Map(users.map((u) => [u.id, u.name]));
    const entries = (await walk(AUDIT_PAGE_MAX)).entries.filter((e) => e.action !== 'test.filler');
    const texts = entries.map((e) => ({ action: e.action, ...describeAuditEntry(e, { user: (id) => names.get(id) }) }));
    const withoutSentence = texts.filter((x) => x.sentence === null);
    expect(withoutSentence).toEqual([]);
    const sentences = texts.map((x) => x.sentence);
    // Expected wording written out by hand from the actions above (names from the demo accounts in README.md).
    expect(sentences).toEqual(
      expect.arrayContaining([
        'Ada Quarrier signed in.',
        'A sign-in as desk@keelson.test failed: wrong password, unknown e-mail or deactivated account.',
        'Ada Quarrier invited tern.bollard@example.org as Reviewer.',
        'Ada Quarrier changed the role of Dana Whitcombe to Reviewer.',
        'Ada Quarrier changed the role of Dana Whitcombe to Desk and deactivated Dana Whitcombe.',
        `Rhea Tolland saved model spec #${specId}.`,
        `Rhea Tolland started run #${run.id} from model spec #${specId}; it finished.`,
        `Ravi Okonedo commented on run #${run.id}.`,
        `Rhea Tolland asked Ravi Okonedo to sign off run #${run.id}.`,
        `Ravi Okonedo requested changes to run #${run.id}.`,
        'Ravi Okonedo signed out.',
      ]),
    );
    expect(sentences.some((x) => /^Ada Quarrier created library “Invented economy” with edition 1 from .+: 240 rows, \d+ series, in decimal/.test(x ?? ''))).toBe(true);
    // No sentence shows raw JSON.
    for (const x of sentences) expect(x).not.toMatch(/[{}"]/);
  });

  it('falls back to key: value lines for a kind it has no sentence for, and for details it cannot read', () => {
    expect(describeAuditEntry({ action: 'library.renamed', userId: 1, detail: JSON.stringify({ libraryId: 4, from: 'Old', to: 'New', tags: ['a', 'b'], note: null }) })).toEqual({
      sentence: null,
      lines: ['libraryId: 4', 'from: Old', 'to: New', 'tags: ["a","b"]', 'note: —'],
    });
    // A known kind whose detail misses the field its sentence needs: the lines, not a wrong sentence.
    expect(describeAuditEntry({ action: 'run.comment', userId: 1, detail: JSON.stringify({ commentId: 3 }) })).toEqual({ sentence: null, lines: ['commentId: 3'] });
    expect(describeAuditEntry({ action: 'spec.update', userId: 1, detail: 'not json' })).toEqual({ sentence: null, lines: ['not json'] });
    expect(describeAuditEntry({ action: 'something.new', userId: null, detail: null })).toEqual({ sentence: null, lines: [] });
    // The password change (written by server/services/users.ts with the number of other sessions ended).
    expect(describeAuditEntry({ action: 'auth.password_change', userId: 3, detail: JSON.stringify({ endedSessions: 2 }) }, { user: () => 'Rhea Tolland' }).sentence).toBe(
      'Rhea Tolland changed their password; 2 other sessions were signed out.',
    );
    expect(describeAuditEntry({ action: 'auth.password_change', userId: 3, detail: JSON.stringify({ endedSessions: 0 }) }, { user: () => 'Rhea Tolland' }).sentence).toBe(
      'Rhea Tolland changed their password.',
    );
    expect(auditDetailLines('[1,2]')).toEqual(['[1,2]']);
    // Ids without a known name read "user 7".
    expect(describeAuditEntry({ action: 'run.signoff_requested', userId: 2, detail: JSON.stringify({ runId: 5, reviewerId: 7 }) }).sentence).toBe('user 2 asked user 7 to sign off run #5.');
  });
});

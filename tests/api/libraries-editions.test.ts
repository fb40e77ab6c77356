/**
 * A new edition remembers its library: kinds and traded flags carried over by series name from the
 * latest edition, new and gone series reported; a new library gets kinds suggested from the
 * uploader's other libraries and from risk-free-like names, each with its reason. Unsharing a
 * library (admin), refused while other people's runs use it.
 *
 * The checks are identities of the contract (what was saved is what the previous edition said),
 * not numbers from outside sources: the statistics of these files are checked in libraries.test.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentsForAllRoles, anonymousAgent, expectEnvelope, makeTestApp, type Agent, type TestApp } from './helpers';
import { confirm, createLibrary, makeCsv } from './libraries-helpers';
import { editionResponseSchema, libraryResponseSchema, uploadResponseSchema, type Upload } from '../../shared/libraries';
import type { Role } from '../../shared/roles';
import { createUser } from '../../server/services/users';

let t: TestApp;
let a: Record<Role, Agent>;
let other: Agent;

beforeAll(async () => {
  t = await makeTestApp();
  a = await agentsForAllRoles(t.app);
  await createUser(t.db, { email: 'third@keelson.test', name: 'Third Researcher', role: 'researcher', password: 'keelson-demo' });
  other = await anonymousAgent(t.app);
  // The CSRF token rotates on sign-in.
  other.csrf = (await other.post('/api/v1/auth/login').set('x-csrf-token', other.csrf).send({ email: 'third@keelson.test', password: 'keelson-demo' }).expect(200)).body.csrfToken;
});
afterAll(() => t.close());

function upload(agent: Agent, csv: string, libraryId?: number | string) {
  const req = agent.post('/api/v1/libraries/uploads').set('x-csrf-token', agent.csrf);
  if (libraryId !== undefined) req.field('libraryId', String(libraryId));
  return req.attach('file', Buffer.from(csv, 'utf8'), { filename: 'returns.csv', contentType: 'text/csv' });
}

async function uploadOk(agent: Agent, csv: string, libraryId?: number): Promise<Upload> {
  const r = await upload(agent, csv, libraryId);
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  return uploadResponseSchema.parse(r.body).upload;
}

/** Confirms an upload exactly as the review shows it: every column, suggested kind and traded flag. */
function asShown(u: Upload) {
  return u.series.map((s) => ({ name: s.name, kind: s.suggestedKind, ...(s.suggestedKind === 'factor' ? { traded: s.suggestedTraded } : {}) }));
}

const byName = (u: Upload, name: string) => u.series.find((s) => s.name === name)!;

describe('a new edition carries the kinds over', () => {
  let libId: number;

  beforeAll(async () => {
    const u = await uploadOk(a.researcher, makeCsv({ T: 24, names: ['GRAIN', 'TIMBER', 'SALT', 'MKT', 'GROWTH', 'rf'] }).csv);
    const r = await confirm(a.researcher, u.id, {
      name: 'Quayside returns',
      visibility: 'private',
      units: 'decimal',
      series: [
        { name: 'GRAIN', kind: 'asset' },
        { name: 'TIMBER', kind: 'asset' },
        { name: 'SALT', kind: 'asset' },
        { name: 'MKT', kind: 'factor', traded: true },
        { name: 'GROWTH', kind: 'factor', traded: false },
        { name: 'rf', kind: 'rf' },
      ],
    });
    expect(r.status).toBe(201);
    libId = r.body.library.id as number;
  });

  it('keeps each series kind and traded flag by name, and lists new and gone series', async () => {
    // Edition 2: SALT is gone, NEWPORT is new, TIMBER is spelled in lower case.
    const u = await uploadOk(a.researcher, makeCsv({ T: 30, seed: 4, names: ['GRAIN', 'timber', 'MKT', 'GROWTH', 'NEWPORT', 'rf'] }).csv, libId);
    expect(u.target).toEqual({ libraryId: libId, libraryName: 'Quayside returns', edition: 1, newSeries: ['NEWPORT'], goneSeries: ['SALT'] });
    expect(byName(u, 'MKT')).toMatchObject({ suggestedKind: 'factor', suggestedTraded: true, suggestion: { source: 'previous_edition' } });
    expect(byName(u, 'GROWTH')).toMatchObject({ suggestedKind: 'factor', suggestedTraded: false, suggestion: { source: 'previous_edition', reason: 'Kept from edition 1: factor (not traded)' } });
    expect(byName(u, 'rf')).toMatchObject({ suggestedKind: 'rf', suggestion: { source: 'previous_edition' } });
    expect(byName(u, 'GRAIN')).toMatchObject({ suggestedKind: 'asset', suggestion: { source: 'previous_edition' } });
    expect(byName(u, 'timber').suggestion.reason).toBe('Kept from edition 1 (named TIMBER there): test asset');
    expect(byName(u, 'NEWPORT')).toMatchObject({ suggestedKind: 'asset', suggestion: { source: 'none' } });
    expect(byName(u, 'NEWPORT').suggestion.reason).toMatch(/^New in this file \(not in edition 1\)/);

    // Confirming as shown saves an edition with the same factors as edition 1.
    const r = await confirm(a.researcher, u.id, { libraryId: libId, units: 'decimal', series: asShown(u) });
    expect(r.status).toBe(201);
    expect(r.body.edition.number).toBe(2);
    const ed = editionResponseSchema.parse((await a.researcher.get(`/api/v1/libraries/${libId}/editions/2`).expect(200)).body).edition;
    expect(ed.series.filter((s) => s.kind === 'factor').map((s) => [s.name, s.traded])).toEqual([
      ['MKT', true],
      ['GROWTH', false],
    ]);
    expect(ed.series.find((s) => s.kind === 'rf')?.name).toBe('rf');
  });

  it('compares with the latest edition, not the first', async () => {
    // Edition 2 has no SALT; edition 3's file has it again: it is new relative to edition 2.
    const u = await uploadOk(a.researcher, makeCsv({ T: 12, seed: 5, names: ['GRAIN', 'SALT', 'MKT'] }).csv, libId);
    expect(u.target).toMatchObject({ edition: 2, newSeries: ['SALT'], goneSeries: ['timber', 'GROWTH', 'NEWPORT', 'rf'] });
    await a.researcher.delete(`/api/v1/libraries/uploads/${u.id}`).set('x-csrf-token', a.researcher.csrf).expect(204);
  });

  it('refuses the target up front for someone who may not add an edition, and reads nothing of it', async () => {
    const csv = makeCsv({ T: 12 }).csv;
    // Another researcher: the private library does not exist for them.
    expectEnvelope((await upload(other, csv, libId).expect(404)).body, 'not_found');
    // A shared library: only admins add editions.
    const shared = await createLibrary(a.admin, csv, { name: 'Team returns', visibility: 'shared' });
    expectEnvelope((await upload(a.researcher, csv, shared.library.id).expect(403)).body, 'forbidden');
    expectEnvelope((await upload(a.researcher, csv, 'abc').expect(404)).body, 'not_found');
    // Nothing was kept.
    expect((t.db.$client.prepare('select count(*) as n from library_uploads where owner_id in (select id from users where email = ?)').get('third@keelson.test') as { n: number }).n).toBe(0);
  });
});

describe('a new library gets suggested kinds', () => {
  it("suggests factors named like factors of the uploader's other libraries, with their traded flag, and says where from", async () => {
    // The researcher owns "Quayside returns" (latest edition 2: MKT traded, GROWTH not traded).
    const u = await uploadOk(a.researcher, makeCsv({ T: 24, names: ['DOCK 1', 'DOCK 2', 'mkt', 'Growth', 'Risk-free'] }).csv);
    expect(u.target).toBeNull();
    expect(byName(u, 'mkt')).toMatchObject({ suggestedKind: 'factor', suggestedTraded: true, suggestion: { source: 'other_library' } });
    expect(byName(u, 'mkt').suggestion.reason).toBe('Suggested factor (traded): MKT is a factor in edition 2 of your library Quayside returns');
    expect(byName(u, 'Growth')).toMatchObject({ suggestedKind: 'factor', suggestedTraded: false });
    expect(byName(u, 'Risk-free')).toMatchObject({ suggestedKind: 'rf', suggestion: { source: 'name' } });
    expect(byName(u, 'DOCK 1')).toMatchObject({ suggestedKind: 'asset', suggestion: { source: 'none' } });
  });

  it("does not read another researcher's private library for suggestions", async () => {
    const u = await uploadOk(other, makeCsv({ T: 24, names: ['DOCK 1', 'GROWTH', 'RF'] }).csv);
    // GROWTH is only a factor in the first researcher's private library.
    expect(byName(u, 'GROWTH')).toMatchObject({ suggestedKind: 'asset', suggestion: { source: 'none' } });
    expect(byName(u, 'RF')).toMatchObject({ suggestedKind: 'rf' });
  });

  it('suggests at most one risk-free series and says why the second is not', async () => {
    const u = await uploadOk(other, makeCsv({ T: 24, names: ['A', 'T-bill', 'RF'] }).csv);
    expect(u.series.map((s) => s.suggestedKind)).toEqual(['asset', 'rf', 'asset']);
    expect(byName(u, 'RF').suggestion.reason).toMatch(/T-bill is the risk-free series; a library keeps at most one/);
  });
});

describe('unsharing a library', () => {
  async function privateLibraryOf(agent: Agent, name: string): Promise<number> {
    const u = await uploadOk(agent, makeCsv({ T: 48, names: ['P1', 'P2', 'P3', 'P4', 'MKT', 'rf'] }).csv);
    const series = u.series.map((s) => ({ name: s.name, kind: s.name === 'MKT' ? 'factor' : s.name === 'rf' ? 'rf' : 'asset', traded: true }));
    const r = await confirm(agent, u.id, { name, visibility: 'private', units: 'decimal', series });
    expect(r.status).toBe(201);
    return r.body.library.id as number;
  }
  const share = (id: number) => a.admin.post(`/api/v1/libraries/${id}/publish`).set('x-csrf-token', a.admin.csrf).send({});
  const unshare = (agent: Agent, id: number) => agent.post(`/api/v1/libraries/${id}/unpublish`).set('x-csrf-token', agent.csrf).send({});

  it('makes a shared library private to its owner again: others no longer find it, the owner still reads it', async () => {
    const id = await privateLibraryOf(a.researcher, 'Slipway returns');
    await share(id).expect(200);
    await a.reviewer.get(`/api/v1/libraries/${id}`).expect(200);
    const before = (t.db.$client.prepare("select count(*) as n from audit_log where action = 'library.unpublished'").get() as { n: number }).n;
    const r = await unshare(a.admin, id).expect(200);
    const lib = libraryResponseSchema.parse(r.body).library;
    expect(lib).toMatchObject({ id, visibility: 'private', can: { publish: true, unpublish: false } });
    expectEnvelope((await a.reviewer.get(`/api/v1/libraries/${id}`).expect(404)).body, 'not_found');
    expectEnvelope((await a.desk.get(`/api/v1/libraries/${id}`).expect(404)).body, 'not_found');
    await a.researcher.get(`/api/v1/libraries/${id}`).expect(200);
    expect((t.db.$client.prepare("select count(*) as n from audit_log where action = 'library.unpublished'").get() as { n: number }).n).toBe(before + 1);
    // Not shared any more: a second unshare is a conflict.
    expectEnvelope((await unshare(a.admin, id).expect(409)).body, 'conflict');
  });

  it("refuses while another person's run uses it, naming what and suggesting archive; nothing changes", async () => {
    const id = await privateLibraryOf(a.researcher, 'Drydock returns');
    await share(id).expect(200);
    const lib = libraryResponseSchema.parse((await other.get(`/api/v1/libraries/${id}`).expect(200)).body).library;
    const editionId = lib.editions[0]!.id;
    const run = await other
      .post('/api/v1/runs')
      .set('x-csrf-token', other.csrf)
      .send({ editionId, spec: { assets: ['P1', 'P2', 'P3', 'P4'], factors: ['MKT'], rf: 'rf' } });
    expect(run.status, JSON.stringify(run.body)).toBe(201);
    const r = await unshare(a.admin, id).expect(409);
    const e = expectEnvelope(r.body, 'conflict');
    expect(e.message).toBe(
      'Library Drydock returns stays shared: 1 run of 1 other person uses its editions, and unsharing would hide their work from them. Archive the library instead (it leaves the lists; runs on it stay readable).',
    );
    await other.get(`/api/v1/libraries/${id}`).expect(200);
    await other.get(`/api/v1/runs/${run.body.run.id as number}`).expect(200);
  });

  it('is for admins only (the access matrix walks every role; here the owner is refused too)', async () => {
    const id = await privateLibraryOf(a.researcher, 'Mooring returns');
    await share(id).expect(200);
    expectEnvelope((await unshare(a.researcher, id).expect(403)).body, 'forbidden');
    expectEnvelope((await unshare(a.admin, 987654).expect(404)).body, 'not_found');
  });
});

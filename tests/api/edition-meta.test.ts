/**
 * Edition metadata (`GET /libraries/:id/editions/:n/meta`): the spec form's read of an edition —
 * names, kinds, traded flags, dates and T, no values. Readable exactly where the edition is: every
 * role on a shared library; the owner and admins on a private one, 404 (not 403) for the others;
 * 404 for ids that name nothing; 401 signed out.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentsForAllRoles, anonymousAgent, expectEnvelope, makeTestApp, type Agent, type TestApp } from './helpers';
import { createLibrary, makeCsv } from './libraries-helpers';
import { ROLES, type Role } from '../../shared/roles';
import { editionDataResponseSchema } from '../../shared/libraries';
import { editionMetaResponseSchema } from '../../shared/edition-meta';
import { createUser } from '../../server/services/users';

let t: TestApp;
let a: Record<Role, Agent>;
let otherResearcher: Agent;
let anon: Agent;
let sharedLib: number;
let privateLib: number;
const NAMES = ['GRAIN', 'TIMBER', 'SALT', 'MKT', 'rf'];

beforeAll(async () => {
  t = await makeTestApp();
  a = await agentsForAllRoles(t.app);
  anon = await anonymousAgent(t.app);
  await createUser(t.db, { email: 'meta-second@keelson.test', name: 'Second Researcher', role: 'researcher', password: 'keelson-demo' });
  otherResearcher = await anonymousAgent(t.app);
  otherResearcher.csrf = (
    await otherResearcher.post('/api/v1/auth/login').set('x-csrf-token', otherResearcher.csrf).send({ email: 'meta-second@keelson.test', password: 'keelson-demo' }).expect(200)
  ).body.csrfToken;
  sharedLib = (await createLibrary(a.admin, makeCsv({ T: 30, names: NAMES }).csv, { name: 'Meta shared', visibility: 'shared' })).library.id;
  privateLib = (await createLibrary(a.researcher, makeCsv({ T: 12, names: NAMES, seed: 7 }).csv, { name: 'Meta private' })).library.id;
});
afterAll(() => t.close());

describe('edition metadata', () => {
  it('gives every role the shared edition’s names, kinds, traded flags, dates and T — equal to the full data read, without values', async () => {
    const full = editionDataResponseSchema.parse((await a.admin.get(`/api/v1/libraries/${sharedLib}/editions/1/data`).expect(200)).body);
    for (const role of ROLES) {
      const r = await a[role].get(`/api/v1/libraries/${sharedLib}/editions/1/meta`);
      expect(r.status, role).toBe(200);
      const { meta } = editionMetaResponseSchema.parse(r.body);
      expect(meta.editionId).toBe(full.editionId);
      expect(meta.libraryName).toBe('Meta shared');
      expect(meta.frequency).toBe('monthly');
      expect(meta.dates).toEqual(full.dates);
      expect(meta.T).toBe(30);
      expect(meta.firstDate).toBe('2001-01');
      expect(meta.lastDate).toBe(full.dates[29]);
      expect(meta.series).toEqual(full.series.map(({ name, kind, traded }) => ({ name, kind, traded })));
      expect(meta.series.map((s) => s.name)).toEqual(NAMES);
      expect(meta.series.find((s) => s.name === 'MKT')).toEqual({ name: 'MKT', kind: 'factor', traded: true });
      expect(meta.riskFree).toBe('rf');
      // no value of any series is sent
      expect(JSON.stringify(r.body)).not.toContain('values');
      expect(r.text.length).toBeLessThan(JSON.stringify(full).length / 3);
    }
  });

  it('says riskFree is null when the edition has no risk-free series', async () => {
    const lib = (await createLibrary(a.admin, makeCsv({ T: 10, names: ['GRAIN', 'MKT'] }).csv, { name: 'Meta no rf', visibility: 'shared' })).library.id;
    const { meta } = editionMetaResponseSchema.parse((await a.desk.get(`/api/v1/libraries/${lib}/editions/1/meta`).expect(200)).body);
    expect(meta.riskFree).toBeNull();
    expect(meta.series.map((s) => s.kind)).toEqual(['asset', 'factor']);
  });

  it('reads a private edition for its owner and admins only; others get 404 with the same words as for a library that does not exist', async () => {
    await a.researcher.get(`/api/v1/libraries/${privateLib}/editions/1/meta`).expect(200);
    await a.admin.get(`/api/v1/libraries/${privateLib}/editions/1/meta`).expect(200);
    for (const [who, agent] of [
      ['second researcher', otherResearcher],
      ['reviewer', a.reviewer],
      ['desk', a.desk],
    ] as const) {
      const r = await agent.get(`/api/v1/libraries/${privateLib}/editions/1/meta`);
      expect(r.status, who).toBe(404);
      expectEnvelope(r.body, 'not_found');
      const ghost = await agent.get('/api/v1/libraries/987654/editions/1/meta');
      expect(ghost.status).toBe(404);
      expect(r.body.error.message.replace(String(privateLib), 'N')).toBe(ghost.body.error.message.replace('987654', 'N'));
    }
  });

  it('answers 404 for ids that name nothing: no such library, no such edition, non-decimal ids', async () => {
    for (const path of ['987654/editions/1', `${sharedLib}/editions/9`, '1e3/editions/1', '0x10/editions/1', `${sharedLib}/editions/01`, `${sharedLib}/editions/-1`, 'abc/editions/1']) {
      const r = await a.admin.get(`/api/v1/libraries/${path}/meta`);
      expect(r.status, path).toBe(404);
      expectEnvelope(r.body, 'not_found');
    }
  });

  it('answers 401 when signed out', async () => {
    const r = await anon.get(`/api/v1/libraries/${sharedLib}/editions/1/meta`);
    expect(r.status).toBe(401);
    expectEnvelope(r.body, 'unauthenticated');
  });
});

/**
 * Return libraries through the API: upload → review → confirm, editions, visibility per role
 * (404 for another researcher's private library), sharing, archive, delete, data read-back,
 * CSV export round trip and percent conversion.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { agentsForAllRoles, expectEnvelope, makeTestApp, tableCounts, type Agent, type TestApp } from './helpers';
import { confirm, createLibrary, makeCsv, uploadCsv } from './libraries-helpers';
import { ROLES, type Role } from '../../shared/roles';
import {
  confirmResponseSchema,
  editionDataResponseSchema,
  editionResponseSchema,
  librariesResponseSchema,
  libraryResponseSchema,
  uploadResponseSchema,
} from '../../shared/libraries';
import { assertEditionReadable, editionIsUsed, loadEditionData } from '../../server/services/edition-data';
import { createUser } from '../../server/services/users';

let t: TestApp;
let a: Record<Role, Agent>;
let otherResearcher: Agent;

beforeAll(async () => {
  t = await makeTestApp();
  a = await agentsForAllRoles(t.app);
  await createUser(t.db, { email: 'second@keelson.test', name: 'Second Researcher', role: 'researcher', password: 'keelson-demo' });
  const { anonymousAgent } = await import('./helpers');
  otherResearcher = await anonymousAgent(t.app);
  otherResearcher.csrf = (await otherResearcher.post('/api/v1/auth/login').set('x-csrf-token', otherResearcher.csrf).send({ email: 'second@keelson.test', password: 'keelson-demo' }).expect(200)).body.csrfToken;
});
afterAll(() => t.close());

function audits(action: string): number {
  return (t.db.$client.prepare('select count(*) as n from audit_log where action = ?').get(action) as { n: number }).n;
}

describe('upload and review', () => {
  it('answers the scripted upload contract with columns, frequency, rows, units and warnings', async () => {
    const { csv } = makeCsv({ T: 24 });
    const r = await uploadCsv(a.researcher, csv, 'harbour.csv');
    expect(r.status).toBe(201);
    const { upload } = uploadResponseSchema.parse(r.body);
    expect(upload).toMatchObject({ columns: ['GRAIN', 'TIMBER', 'SALT', 'MKT', 'rf'], frequency: 'monthly', rows: 24, units: 'decimal', fileName: 'harbour.csv' });
    expect(upload.firstDate).toBe('2001-01');
    expect(upload.lastDate).toBe('2002-12');
    expect(upload.series.find((s) => s.name === 'rf')?.suggestedKind).toBe('rf');
    // The pending upload is readable again by its owner only.
    expect((await a.researcher.get(`/api/v1/libraries/uploads/${upload.id}`)).status).toBe(200);
    expectEnvelope((await otherResearcher.get(`/api/v1/libraries/uploads/${upload.id}`).expect(404)).body, 'not_found');
    expectEnvelope((await a.admin.get(`/api/v1/libraries/uploads/${upload.id}`).expect(404)).body, 'not_found');
    // Discard removes it.
    await a.researcher.delete(`/api/v1/libraries/uploads/${upload.id}`).set('x-csrf-token', a.researcher.csrf).expect(204);
    expect((await a.researcher.get(`/api/v1/libraries/uploads/${upload.id}`)).status).toBe(404);
  });

  it('expires a pending upload after a day: it can no longer be read or confirmed, and the next upload purges it', async () => {
    const { upload } = uploadResponseSchema.parse((await uploadCsv(a.researcher, makeCsv({ T: 6 }).csv).expect(201)).body);
    const left = Date.parse(upload.expiresAt) - Date.now();
    expect(left).toBeGreaterThan(23.9 * 3600 * 1000);
    expect(left).toBeLessThanOrEqual(24 * 3600 * 1000);
    t.db.$client.prepare('update library_uploads set expires_at = ? where id = ?').run(new Date(Date.now() - 1000).toISOString(), upload.id);
    expect((await a.researcher.get(`/api/v1/libraries/uploads/${upload.id}`)).status).toBe(404);
    const r = await confirm(a.researcher, upload.id, { name: 'Late', visibility: 'private', units: 'decimal', series: [{ name: 'GRAIN', kind: 'asset' }] });
    expect(r.status).toBe(404);
    expect(expectEnvelope(r.body, 'not_found').message).toMatch(/kept for a day/);
    await uploadCsv(a.researcher, makeCsv({ T: 6 }).csv).expect(201);
    expect(t.db.$client.prepare('select 1 from library_uploads where id = ?').get(upload.id)).toBeUndefined();
  });

  it('computes per-series stats (divisor T) that match a hand computation', async () => {
    const csv = 'date,A,B\n2020-01,1,0.5\n2020-02,2,\n2020-03,3,0.7\n2020-04,6,NA\n';
    const { upload } = uploadResponseSchema.parse((await uploadCsv(a.researcher, csv).expect(201)).body);
    const A = upload.series[0]!.stats;
    // mean (1+2+3+6)/4 = 3; deviations -2,-1,0,3 → ss = 14, sd = sqrt(14/4) (hand computation).
    expect(A).toMatchObject({ count: 4, missing: 0, mean: 3, min: 1, max: 6 });
    expect(A.sd).toBeCloseTo(Math.sqrt(3.5), 14);
    const B = upload.series[1]!.stats;
    expect(B).toMatchObject({ count: 2, missing: 2, min: 0.5, max: 0.7 });
    expect(B.mean).toBeCloseTo(0.6, 15);
    expect(upload.warnings.filter((w) => w.code === 'missing').map((w) => w.column)).toEqual(['B']);
  });

  it('detects percent units and flags a percent column among decimals, a constant column and a jump', async () => {
    const pct = makeCsv({ T: 30, scale: 100, names: ['A', 'B', 'C'] }).csv;
    expect(uploadResponseSchema.parse((await uploadCsv(a.researcher, pct).expect(201)).body).upload.units).toBe('percent');

    const T = 60;
    const rows = ['date,A,B,C,FLAT,SPIKE'];
    const { values } = makeCsv({ T, names: ['A', 'B', 'C', 'SPIKE'], seed: 9 });
    for (let t0 = 0; t0 < T; t0++) {
      const d = `${2000 + Math.floor(t0 / 12)}-${String((t0 % 12) + 1).padStart(2, '0')}`;
      const spike = t0 === 40 ? 5 : values[3]![t0]!;
      rows.push([d, values[0]![t0], values[1]![t0]! * 100, values[2]![t0], 0.001, spike].join(','));
    }
    const { upload } = uploadResponseSchema.parse((await uploadCsv(a.researcher, rows.join('\n')).expect(201)).body);
    expect(upload.units).toBe('decimal');
    const codes = upload.warnings.map((w) => `${w.code}:${w.column ?? ''}`);
    expect(codes).toContain('percent_among_decimals:B');
    expect(codes).toContain('constant:FLAT');
    expect(codes).toContain('jump:SPIKE');
    const jump = upload.warnings.find((w) => w.code === 'jump')!;
    expect(jump.row).toBe(42); // header is row 1, t0 = 40 is line 42
    expect(jump.message).toMatch(/2003-05/);
  });

  it('sorts rows out of date order and says so', async () => {
    const csv = 'date,A\n2020-03,0.03\n2020-01,0.01\n2020-02,0.02\n';
    const { upload } = uploadResponseSchema.parse((await uploadCsv(a.researcher, csv).expect(201)).body);
    expect(upload.warnings[0]).toMatchObject({ code: 'sorted', row: 3 });
    const r = confirmResponseSchema.parse(
      (await confirm(a.researcher, upload.id, { name: 'Sorted', visibility: 'private', units: 'decimal', series: [{ name: 'A', kind: 'asset' }] }).expect(201)).body,
    );
    const d = loadEditionData(t.db, r.edition.id);
    expect(d.dates).toEqual(['2020-01', '2020-02', '2020-03']);
    expect(d.series[0]!.values).toEqual([0.01, 0.02, 0.03]);
  });
});

describe('confirm and editions', () => {
  it('writes a library, edition 1 and one row per series only on confirm, with an audit line', async () => {
    const before = tableCounts(t.db);
    const { csv } = makeCsv({ T: 12 });
    const up = uploadResponseSchema.parse((await uploadCsv(a.researcher, csv).expect(201)).body).upload;
    const mid = tableCounts(t.db);
    expect(mid.libraries).toBe(before.libraries);
    expect(mid.library_series).toBe(before.library_series);
    expect(mid.library_uploads).toBe(before.library_uploads + 1);
    const auditsBefore = audits('library.edition_added');
    const r = await confirm(a.researcher, up.id, {
      name: 'Quay returns',
      visibility: 'private',
      units: 'decimal',
      series: [
        { name: 'GRAIN', kind: 'asset' },
        { name: 'TIMBER', kind: 'asset' },
        { name: 'MKT', kind: 'factor', traded: true },
        { name: 'rf', kind: 'rf' },
      ],
    });
    expect(r.status).toBe(201);
    const body = confirmResponseSchema.parse(r.body);
    expect(body.library.name).toBe('Quay returns');
    expect(body.edition.number).toBe(1);
    const after = tableCounts(t.db);
    expect(after.libraries).toBe(before.libraries + 1);
    expect(after.library_editions).toBe(before.library_editions + 1);
    expect(after.library_series).toBe(before.library_series + 4); // SALT was left out
    expect(after.library_uploads).toBe(before.library_uploads); // consumed
    expect(audits('library.edition_added')).toBe(auditsBefore + 1);
    // A consumed upload cannot be confirmed twice.
    expect((await confirm(a.researcher, up.id, { name: 'Again', visibility: 'private', units: 'decimal', series: [{ name: 'GRAIN', kind: 'asset' }] })).status).toBe(404);

    const ed = editionResponseSchema.parse((await a.researcher.get(`/api/v1/libraries/${body.library.id}/editions/1`).expect(200)).body).edition;
    expect(ed.series.map((s) => [s.name, s.kind, s.traded])).toEqual([
      ['GRAIN', 'asset', true],
      ['TIMBER', 'asset', true],
      ['MKT', 'factor', true],
      ['rf', 'rf', true],
    ]);
    expect(ed.rows).toBe(12);
  });

  it('adds edition n+1 on re-upload and keeps earlier editions readable', async () => {
    const first = makeCsv({ T: 12, seed: 3 });
    const lib = await createLibrary(a.researcher, first.csv, { name: 'Editions' });
    const second = makeCsv({ T: 18, seed: 4 });
    const e2 = await createLibrary(a.researcher, second.csv, { libraryId: lib.library.id });
    expect(e2.library.id).toBe(lib.library.id);
    expect(e2.edition.number).toBe(2);
    const detail = libraryResponseSchema.parse((await a.researcher.get(`/api/v1/libraries/${lib.library.id}`).expect(200)).body).library;
    expect(detail.editions.map((e) => e.number)).toEqual([2, 1]);
    expect(detail.latestEdition).toBe(2);
    expect(detail.editionCount).toBe(2);
    const d1 = editionDataResponseSchema.parse((await a.researcher.get(`/api/v1/libraries/${lib.library.id}/editions/1/data`).expect(200)).body);
    const d2 = editionDataResponseSchema.parse((await a.researcher.get(`/api/v1/libraries/${lib.library.id}/editions/2/data`).expect(200)).body);
    expect(d1.dates).toHaveLength(12);
    expect(d2.dates).toHaveLength(18);
    expect(d1.series[0]!.values).toEqual(first.values[0]);
    expect(d2.series[0]!.values).toEqual(second.values[0]);
  });

  it('refuses an edition of another frequency, a series that is not a column, two risk-free series', async () => {
    const lib = await createLibrary(a.researcher, makeCsv({ T: 6 }).csv, { name: 'Strict' });
    const daily = 'date,GRAIN\n2020-01-02,0.01\n2020-01-03,0.02\n';
    const up = uploadResponseSchema.parse((await uploadCsv(a.researcher, daily).expect(201)).body).upload;
    const before = tableCounts(t.db);
    const r1 = await confirm(a.researcher, up.id, { libraryId: lib.library.id, units: 'decimal', series: [{ name: 'GRAIN', kind: 'asset' }] });
    expect(r1.status).toBe(409);
    expect(expectEnvelope(r1.body, 'conflict').message).toMatch(/monthly.*daily/);
    const r2 = await confirm(a.researcher, up.id, { name: 'X', visibility: 'private', units: 'decimal', series: [{ name: 'NOPE', kind: 'asset' }] });
    expect(r2.status).toBe(400);
    expect(expectEnvelope(r2.body, 'validation_failed').message).toMatch(/NOPE/);
    const up2 = uploadResponseSchema.parse((await uploadCsv(a.researcher, makeCsv({ T: 6, names: ['A', 'rf'] }).csv).expect(201)).body).upload;
    const r3 = await confirm(a.researcher, up2.id, { name: 'X', visibility: 'private', units: 'decimal', series: [{ name: 'A', kind: 'rf' }, { name: 'rf', kind: 'rf' }] });
    expect(r3.status).toBe(400);
    expect(expectEnvelope(r3.body).message).toMatch(/risk-free/);
    const r4 = await confirm(a.researcher, up2.id, { visibility: 'private', units: 'decimal', series: [{ name: 'A', kind: 'asset' }] });
    expect(r4.status).toBe(400);
    expect(expectEnvelope(r4.body, 'validation_failed').message).toMatch(/name/);
    const after = tableCounts(t.db);
    expect(after.libraries).toBe(before.libraries);
    expect(after.library_editions).toBe(before.library_editions);
    expect(after.library_series).toBe(before.library_series);
  });
});

describe('units', () => {
  it('divides a percent upload by 100 on confirm (stored as decimals)', async () => {
    const csv = 'date,A,B\n2020-01,1.5,-2.25\n2020-02,,0.125\n2020-03,3,12\n';
    const up = uploadResponseSchema.parse((await uploadCsv(a.researcher, csv).expect(201)).body).upload;
    expect(up.units).toBe('percent');
    const r = confirmResponseSchema.parse(
      (await confirm(a.researcher, up.id, { name: 'Pct', visibility: 'private', units: 'percent', series: [{ name: 'A', kind: 'asset' }, { name: 'B', kind: 'factor', traded: false }] }).expect(201)).body,
    );
    const d = editionDataResponseSchema.parse((await a.researcher.get(`/api/v1/libraries/${r.library.id}/editions/1/data`).expect(200)).body);
    // x% → x × 0.01 (the same floating-point operation the server applies).
    expect(d.series[0]!.values).toEqual([1.5 * 0.01, null, 3 * 0.01]);
    expect(d.series[1]!.values).toEqual([-2.25 * 0.01, 0.125 * 0.01, 12 * 0.01]);
    expect(d.series[1]).toMatchObject({ kind: 'factor', traded: false });
    const ed = editionResponseSchema.parse((await a.researcher.get(`/api/v1/libraries/${r.library.id}/editions/1`).expect(200)).body).edition;
    expect(ed.sourceUnits).toBe('percent');
    expect(ed.series[0]!.stats.mean).toBeCloseTo(0.0225, 15);
  });

  it('keeps decimals unchanged when the user confirms decimals', async () => {
    const csv = 'date,A\n2020-01,0.015\n2020-02,0.03\n';
    const up = uploadResponseSchema.parse((await uploadCsv(a.researcher, csv).expect(201)).body).upload;
    const r = confirmResponseSchema.parse((await confirm(a.researcher, up.id, { name: 'Dec', visibility: 'private', units: 'decimal', series: [{ name: 'A', kind: 'asset' }] }).expect(201)).body);
    expect(loadEditionData(t.db, r.edition.id).series[0]!.values).toEqual([0.015, 0.03]);
  });
});

describe('data read-back', () => {
  it('serves the same JSON from the stored per-series text and from the binary values (rows without the text)', async () => {
    const { csv } = makeCsv({ T: 50, seed: 5 });
    const lines = csv.trim().split('\n');
    lines[3] = lines[3]!.replace(/,([^,]+)$/, ',NA');
    const lib = await createLibrary(a.admin, `${lines.join('\n')}\n`, { name: 'Read-back', visibility: 'shared' });
    const url = `/api/v1/libraries/${lib.library.id}/editions/1/data`;
    const fromText = (await a.desk.get(url).expect(200)).text;
    t.db.$client.prepare('update library_series set values_json = null where edition_id = ?').run(lib.edition.id);
    const fromBlob = (await a.desk.get(url).expect(200)).text;
    expect(fromBlob).toBe(fromText);
    const parsed = editionDataResponseSchema.parse(JSON.parse(fromText));
    expect(parsed.series[4]!.values[2]).toBeNull();
    // Same numbers as the runs module's reader (identity: two readers of one stored edition).
    expect(parsed.series.map((s) => s.values)).toEqual(loadEditionData(t.db, lib.edition.id).series.map((s) => s.values));
  });
});

describe('export round trip', () => {
  it('exports an edition as CSV that re-imports to identical values (full precision, missing kept)', async () => {
    const { csv, values } = makeCsv({ T: 120, seed: 77 });
    // full-precision doubles, one missing cell
    const lines = csv.trim().split('\n');
    lines[5] = lines[5]!.replace(/,([^,]+),/, ',,');
    const lib = await createLibrary(a.admin, `${lines.join('\n')}\n`, { name: 'Round trip', visibility: 'shared' });
    const exp = await a.desk.get(`/api/v1/libraries/${lib.library.id}/editions/1/export.csv`).expect(200);
    expect(exp.headers['content-type']).toMatch(/text\/csv/);
    expect(exp.headers['content-disposition']).toMatch(/Round-trip-edition-1\.csv/);
    const again = await createLibrary(a.admin, exp.text, { name: 'Round trip again', visibility: 'shared' });
    const d1 = loadEditionData(t.db, lib.edition.id);
    const d2 = loadEditionData(t.db, again.edition.id);
    expect(d2.dates).toEqual(d1.dates);
    expect(d2.series.map((s) => s.values)).toEqual(d1.series.map((s) => s.values)); // toEqual on doubles: bit-for-bit equal
    expect(d1.series[0]!.values[4]).toBeNull();
    expect(d1.series[1]!.values[0]).toBe(values[1]![0]);
  });
});

describe('visibility and roles', () => {
  let privateLib: number;
  let sharedLib: number;
  beforeAll(async () => {
    privateLib = (await createLibrary(a.researcher, makeCsv({ T: 6 }).csv, { name: 'Rhea private' })).library.id;
    sharedLib = (await createLibrary(a.admin, makeCsv({ T: 6 }).csv, { name: 'Team shared', visibility: 'shared' })).library.id;
  });

  it('lets every role list and read shared libraries', async () => {
    for (const role of ROLES) {
      const list = librariesResponseSchema.parse((await a[role].get('/api/v1/libraries').expect(200)).body).libraries;
      expect(list.some((l) => l.id === sharedLib), role).toBe(true);
      await a[role].get(`/api/v1/libraries/${sharedLib}`).expect(200);
      await a[role].get(`/api/v1/libraries/${sharedLib}/editions/1`).expect(200);
      await a[role].get(`/api/v1/libraries/${sharedLib}/editions/1/data`).expect(200);
      await a[role].get(`/api/v1/libraries/${sharedLib}/editions/1/export.csv`).expect(200);
    }
  });

  it("answers 404 (not 403) for another's private library, on every read route; the owner and admins read it", async () => {
    for (const agent of [otherResearcher, a.reviewer, a.desk]) {
      const list = librariesResponseSchema.parse((await agent.get('/api/v1/libraries').expect(200)).body).libraries;
      expect(list.some((l) => l.id === privateLib)).toBe(false);
      for (const path of ['', '/editions/1', '/editions/1/data', '/editions/1/export.csv']) {
        const r = await agent.get(`/api/v1/libraries/${privateLib}${path}`);
        expect(r.status, path).toBe(404);
        expectEnvelope(r.body, 'not_found');
      }
      // Same answer as for a library that does not exist.
      const ghost = await agent.get('/api/v1/libraries/987654');
      expect(ghost.body.error.message.replace('987654', 'N')).toBe((await agent.get(`/api/v1/libraries/${privateLib}`)).body.error.message.replace(String(privateLib), 'N'));
    }
    await a.researcher.get(`/api/v1/libraries/${privateLib}/editions/1/data`).expect(200);
    await a.admin.get(`/api/v1/libraries/${privateLib}/editions/1/data`).expect(200);
    const mine = librariesResponseSchema.parse((await a.researcher.get('/api/v1/libraries?scope=mine').expect(200)).body).libraries;
    expect(mine.every((l) => l.visibility === 'private' && l.owner?.name === 'Rhea Tolland')).toBe(true);
  });

  it('assertEditionReadable follows the same rules for the runs module', async () => {
    const edId = (libraryResponseSchema.parse((await a.admin.get(`/api/v1/libraries/${privateLib}`)).body).library.editions[0]!).id;
    const users = t.db.$client.prepare('select id, email, name, role from users').all() as { id: number; email: string; name: string; role: Role }[];
    const by = (email: string) => users.find((u) => u.email === email)!;
    expect(() => assertEditionReadable(t.db, by('researcher@keelson.test'), edId)).not.toThrow();
    expect(() => assertEditionReadable(t.db, by('admin@keelson.test'), edId)).not.toThrow();
    for (const e of ['second@keelson.test', 'reviewer@keelson.test', 'desk@keelson.test']) {
      expect(() => assertEditionReadable(t.db, by(e), edId)).toThrow(expect.objectContaining({ code: 'not_found' }));
    }
    expect(() => assertEditionReadable(t.db, by('admin@keelson.test'), 999999)).toThrow(expect.objectContaining({ code: 'not_found' }));
  });

  it('refuses uploads and confirms to reviewer and desk (403), and shared confirms to researchers', async () => {
    const { csv } = makeCsv({ T: 6 });
    for (const role of ['reviewer', 'desk'] as const) {
      const r = await uploadCsv(a[role], csv);
      expect(r.status).toBe(403);
      expectEnvelope(r.body, 'forbidden');
    }
    const up = uploadResponseSchema.parse((await uploadCsv(a.researcher, csv).expect(201)).body).upload;
    const before = tableCounts(t.db);
    const r = await confirm(a.researcher, up.id, { name: 'Nope', visibility: 'shared', units: 'decimal', series: [{ name: 'GRAIN', kind: 'asset' }] });
    expect(r.status).toBe(403);
    expect(expectEnvelope(r.body, 'forbidden').message).toMatch(/admin/i);
    expect(tableCounts(t.db)).toEqual(before);
    // Researchers may not add editions to a shared library either.
    const r2 = await confirm(a.researcher, up.id, { libraryId: sharedLib, units: 'decimal', series: [{ name: 'GRAIN', kind: 'asset' }] });
    expect(r2.status).toBe(403);
    // …nor to someone else's private library (which they cannot see: 404).
    const up2 = uploadResponseSchema.parse((await uploadCsv(otherResearcher, csv).expect(201)).body).upload;
    expect((await confirm(otherResearcher, up2.id, { libraryId: privateLib, units: 'decimal', series: [{ name: 'GRAIN', kind: 'asset' }] })).status).toBe(404);
  });

  it('lets only admins publish; publishing shares a private library with everyone', async () => {
    const lib = (await createLibrary(a.researcher, makeCsv({ T: 6 }).csv, { name: 'To promote' })).library.id;
    expect((await a.researcher.post(`/api/v1/libraries/${lib}/publish`).set('x-csrf-token', a.researcher.csrf)).status).toBe(403);
    expect((await a.desk.get(`/api/v1/libraries/${lib}`)).status).toBe(404);
    const n = audits('library.published');
    const r = await a.admin.post(`/api/v1/libraries/${lib}/publish`).set('x-csrf-token', a.admin.csrf).expect(200);
    expect(libraryResponseSchema.parse(r.body).library.visibility).toBe('shared');
    expect(audits('library.published')).toBe(n + 1);
    await a.desk.get(`/api/v1/libraries/${lib}`).expect(200);
    expect((await a.admin.post(`/api/v1/libraries/${lib}/publish`).set('x-csrf-token', a.admin.csrf)).status).toBe(409);
  });

  it('archives (never deletes): owner or admin for private, admin only for shared; hidden from the default list', async () => {
    const lib = (await createLibrary(a.researcher, makeCsv({ T: 6 }).csv, { name: 'Old one' })).library.id;
    expect((await otherResearcher.post(`/api/v1/libraries/${lib}/archive`).set('x-csrf-token', otherResearcher.csrf)).status).toBe(404);
    expect((await a.researcher.post(`/api/v1/libraries/${sharedLib}/archive`).set('x-csrf-token', a.researcher.csrf)).status).toBe(403);
    const n = audits('library.archived');
    const r = await a.researcher.post(`/api/v1/libraries/${lib}/archive`).set('x-csrf-token', a.researcher.csrf).expect(200);
    expect(r.body.library.archived).toBe(true);
    expect(audits('library.archived')).toBe(n + 1);
    const list = librariesResponseSchema.parse((await a.researcher.get('/api/v1/libraries').expect(200)).body).libraries;
    expect(list.some((l) => l.id === lib)).toBe(false);
    const archived = librariesResponseSchema.parse((await a.researcher.get('/api/v1/libraries?archived=only').expect(200)).body).libraries;
    expect(archived.map((l) => l.id)).toContain(lib);
    // still readable, no new editions while archived
    await a.researcher.get(`/api/v1/libraries/${lib}/editions/1/data`).expect(200);
    const up = uploadResponseSchema.parse((await uploadCsv(a.researcher, makeCsv({ T: 6 }).csv).expect(201)).body).upload;
    expect((await confirm(a.researcher, up.id, { libraryId: lib, units: 'decimal', series: [{ name: 'GRAIN', kind: 'asset' }] })).status).toBe(409);
    await a.researcher.post(`/api/v1/libraries/${lib}/restore`).set('x-csrf-token', a.researcher.csrf).expect(200);
    expect((await confirm(a.researcher, up.id, { libraryId: lib, units: 'decimal', series: [{ name: 'GRAIN', kind: 'asset' }] })).status).toBe(201);
    // admin archives a shared library
    const shared2 = (await createLibrary(a.admin, makeCsv({ T: 6 }).csv, { name: 'Shared old', visibility: 'shared' })).library.id;
    await a.admin.post(`/api/v1/libraries/${shared2}/archive`).set('x-csrf-token', a.admin.csrf).expect(200);
  });

  it('lets admins delete an edition no run uses, never the only one, never a used one', async () => {
    const lib = await createLibrary(a.admin, makeCsv({ T: 6 }).csv, { name: 'Deletable', visibility: 'shared' });
    expect((await a.admin.delete(`/api/v1/libraries/${lib.library.id}/editions/1`).set('x-csrf-token', a.admin.csrf)).status).toBe(409);
    const e2 = await createLibrary(a.admin, makeCsv({ T: 7 }).csv, { libraryId: lib.library.id });
    const e3 = await createLibrary(a.admin, makeCsv({ T: 8 }).csv, { libraryId: lib.library.id });
    expect(e3.edition.number).toBe(3);
    expect((await a.researcher.delete(`/api/v1/libraries/${lib.library.id}/editions/2`).set('x-csrf-token', a.researcher.csrf)).status).toBe(403);
    const n = audits('library.edition_deleted');
    const seriesBefore = tableCounts(t.db).library_series;
    await a.admin.delete(`/api/v1/libraries/${lib.library.id}/editions/2`).set('x-csrf-token', a.admin.csrf).expect(204);
    expect(audits('library.edition_deleted')).toBe(n + 1);
    expect(tableCounts(t.db).library_series).toBe(seriesBefore - 5);
    expect((await a.admin.get(`/api/v1/libraries/${lib.library.id}/editions/2`)).status).toBe(404);
    await a.admin.get(`/api/v1/libraries/${lib.library.id}/editions/3`).expect(200);
    expect(editionIsUsed(t.db, e2.edition.id)).toBe(false);
    // numbers are never reused
    expect((await createLibrary(a.admin, makeCsv({ T: 9 }).csv, { libraryId: lib.library.id })).edition.number).toBe(4);

    // An edition a run records stays. Uses a stand-in `runs` table when the runs module has not created one.
    const hasRuns = t.db.$client.prepare("select 1 from sqlite_master where type='table' and name='runs'").get();
    if (!hasRuns) t.db.$client.exec('create table runs (id integer primary key, edition_id integer)');
    const cols = (t.db.$client.prepare("select name, \"notnull\" as nn, dflt_value as d, pk from pragma_table_info('runs')").all() as { name: string; nn: number; d: unknown; pk: number }[]);
    const required = cols.filter((c) => c.nn && c.d === null && !c.pk && c.name !== 'edition_id');
    t.db.$client.pragma('foreign_keys = OFF');
    const names = ['edition_id', ...required.map((c) => c.name)];
    t.db.$client.prepare(`insert into runs (${names.map((x) => `"${x}"`).join(',')}) values (${names.map(() => '?').join(',')})`).run(e3.edition.id, ...required.map(() => 1));
    t.db.$client.pragma('foreign_keys = ON');
    expect(editionIsUsed(t.db, e3.edition.id)).toBe(true);
    const r = await a.admin.delete(`/api/v1/libraries/${lib.library.id}/editions/3`).set('x-csrf-token', a.admin.csrf);
    expect(r.status).toBe(409);
    expect(expectEnvelope(r.body, 'conflict').message).toMatch(/used by a run/);
    const detail = libraryResponseSchema.parse((await a.admin.get(`/api/v1/libraries/${lib.library.id}`)).body).library;
    expect(detail.editions.find((e) => e.number === 3)!.used).toBe(true);
    expect(detail.editions.find((e) => e.number === 4)!.used).toBe(false);
  });

  it('keeps an edition that a saved model spec points at', async () => {
    const lib = await createLibrary(a.admin, makeCsv({ T: 6 }).csv, { name: 'Spec-held', visibility: 'shared' });
    const e2 = await createLibrary(a.admin, makeCsv({ T: 7 }).csv, { libraryId: lib.library.id });
    const hasSpecs = t.db.$client.prepare("select 1 from sqlite_master where type='table' and name='model_specs'").get();
    if (!hasSpecs) t.db.$client.exec('create table model_specs (id integer primary key, edition_id integer)');
    const cols = t.db.$client.prepare("select name, \"notnull\" as nn, dflt_value as d, pk from pragma_table_info('model_specs')").all() as { name: string; nn: number; d: unknown; pk: number }[];
    const required = cols.filter((c) => c.nn && c.d === null && !c.pk && c.name !== 'edition_id').map((c) => c.name);
    t.db.$client.pragma('foreign_keys = OFF');
    t.db.$client.prepare(`insert into model_specs (${['edition_id', ...required].map((x) => `"${x}"`).join(',')}) values (${['edition_id', ...required].map(() => '?').join(',')})`).run(e2.edition.id, ...required.map(() => 1));
    t.db.$client.pragma('foreign_keys = ON');
    const before = tableCounts(t.db);
    const r = await a.admin.delete(`/api/v1/libraries/${lib.library.id}/editions/2`).set('x-csrf-token', a.admin.csrf);
    expect(r.status).toBe(409);
    expect(expectEnvelope(r.body, 'conflict').message).toMatch(/1 saved model spec/);
    expect(tableCounts(t.db)).toEqual(before);
    await a.admin.delete(`/api/v1/libraries/${lib.library.id}/editions/1`).set('x-csrf-token', a.admin.csrf).expect(204);
  });

  it('filters the list by search text, frequency and covered date', async () => {
    await createLibrary(a.admin, 'date,X\n2019-06-03,0.01\n2019-06-04,0.02\n', { name: 'Daily shipyard', visibility: 'shared' });
    const q = librariesResponseSchema.parse((await a.desk.get('/api/v1/libraries?q=shipyard').expect(200)).body).libraries;
    expect(q.map((l) => l.name)).toEqual(['Daily shipyard']);
    const daily = librariesResponseSchema.parse((await a.desk.get('/api/v1/libraries?frequency=daily').expect(200)).body).libraries;
    expect(daily.every((l) => l.frequency === 'daily')).toBe(true);
    expect(daily.length).toBeGreaterThan(0);
    const covers = librariesResponseSchema.parse((await a.desk.get('/api/v1/libraries?covers=2019-06').expect(200)).body).libraries;
    expect(covers.map((l) => l.name)).toContain('Daily shipyard');
    expect(covers.every((l) => l.frequency === 'daily')).toBe(true); // the monthly test libraries start in 2001 and end before 2019
    const bad = await a.desk.get('/api/v1/libraries?frequency=weekly');
    expect(bad.status).toBe(400);
  });
});

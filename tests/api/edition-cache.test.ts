/**
 * The cache of converted edition series (server/services/edition-data.ts): editions never change,
 * so loadEditionData keeps the last editions read, per database, up to a bound of numbers held.
 *
 * Checks: a cached read equals the conversion straight from the stored blobs (loadEditionArrays,
 * NaN → null), an identity; a second read is served from the cache (the same arrays); two databases
 * with the same edition ids never share entries; least-recently-used eviction under the bound; an
 * edition larger than the bound is served but not kept; a deleted edition is not found although it
 * was cached. Data: the invented demo libraries (server/seed/demo-libraries.ts).
 */
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { agentAs, makeTestApp, type TestApp } from './helpers';
import { makeFixture, uploadFixture } from './runs-fixture';
import { createLibrary, makeCsv } from './libraries-helpers';
import { seedDemoLibraries } from '../../server/seed/demo-libraries';
import { EDITION_CACHE_VALUES, editionCacheContents, loadEditionArrays, loadEditionData, setEditionCacheLimit } from '../../server/services/edition-data';

let a: TestApp;
let b: TestApp;
/** The demo editions' ids in database a. */
let editions: number[];

beforeAll(async () => {
  a = await makeTestApp();
  seedDemoLibraries(a.db);
  b = await makeTestApp();
  await uploadFixture(await agentAs(b.app, 'admin'), makeFixture(), { name: 'Invented economy', visibility: 'shared' });
  const rows = a.db.$client.prepare('select id from library_editions order by id').all() as { id: number }[];
  editions = rows.map((r) => r.id);
});
afterEach(() => setEditionCacheLimit(EDITION_CACHE_VALUES));
afterAll(async () => {
  await a.close();
  await b.close();
});

describe('edition series cache', () => {
  it('serves exactly the stored values (missing as null), and the same arrays on the next read', () => {
    const id = editions[0];
    const raw = loadEditionArrays(a.db, id);
    const first = loadEditionData(a.db, id);
    expect(first.dates).toEqual(raw.dates);
    expect(first.series).toEqual(raw.series.map((s) => ({ name: s.name, kind: s.kind, traded: s.traded, values: Array.from(s.values, (v) => (Number.isNaN(v) ? null : v)) })));
    const second = loadEditionData(a.db, id);
    expect(second.series).toBe(first.series);
    expect(editionCacheContents(a.db).editionIds).toContain(id);
  });

  it('keeps databases apart: edition 1 of one database is not edition 1 of another', () => {
    expect(editions[0]).toBe(1);
    const inA = loadEditionData(a.db, 1);
    const inB = loadEditionData(b.db, 1);
    expect(inA.libraryName).not.toBe(inB.libraryName);
    expect(inB.series.map((s) => s.name)).toEqual(loadEditionArrays(b.db, 1).series.map((s) => s.name));
    expect(inB.series.map((s) => s.name)).not.toEqual(inA.series.map((s) => s.name));
  });

  it('evicts the least recently used edition when the bound is reached, and never keeps one larger than the bound', async () => {
    // three editions of the same size in a database of their own
    const c = await makeTestApp();
    try {
      const admin = await agentAs(c.app, 'admin');
      const ids: number[] = [];
      for (const seed of [1, 2, 3]) ids.push((await uploadFixture(admin, makeFixture(seed), { name: `Invented economy ${seed}`, visibility: 'shared' })).editionId);
      const n = loadEditionArrays(c.db, ids[0]).series.reduce((k, x) => k + x.values.length, 0);
      const [e1, e2, e3] = ids;
      setEditionCacheLimit(2 * n); // room for two
      loadEditionData(c.db, e1);
      loadEditionData(c.db, e2);
      expect(editionCacheContents(c.db)).toEqual({ editionIds: [e1, e2], values: 2 * n });
      loadEditionData(c.db, e1); // e1 is now the most recent, e2 the least
      loadEditionData(c.db, e3);
      expect(editionCacheContents(c.db)).toEqual({ editionIds: [e1, e3], values: 2 * n });
      // the evicted edition is read again from the blobs, with the same values
      expect(loadEditionData(c.db, e2).series).toEqual(loadEditionArrays(c.db, e2).series.map((x) => ({ name: x.name, kind: x.kind, traded: x.traded, values: Array.from(x.values, (v) => (Number.isNaN(v) ? null : v)) })));
      expect(editionCacheContents(c.db).editionIds).toEqual([e3, e2]);
      // smaller than one edition: served, not kept
      setEditionCacheLimit(n - 1);
      expect(loadEditionData(c.db, e1).series.length).toBeGreaterThan(0);
      expect(editionCacheContents(c.db).editionIds).not.toContain(e1);
    } finally {
      await c.close();
    }
  });

  it('a deleted edition is not found, although it was cached', async () => {
    const admin = await agentAs(b.app, 'admin');
    const first = await createLibrary(admin, makeCsv({ seed: 3 }).csv, { name: 'Invented returns, two editions', visibility: 'shared' });
    const second = await createLibrary(admin, makeCsv({ seed: 4 }).csv, { libraryId: first.library.id });
    const id = second.edition.id;
    loadEditionData(b.db, id);
    expect(editionCacheContents(b.db).editionIds).toContain(id);
    await admin.delete(`/api/v1/libraries/${first.library.id}/editions/${second.edition.number}`).set('x-csrf-token', admin.csrf).expect(204);
    expect(() => loadEditionData(b.db, id)).toThrow(/No library edition/);
    expect(loadEditionData(b.db, first.edition.id).series.length).toBeGreaterThan(0);
  });
});

/**
 * Drizzle against hand-written better-sqlite3 statements on the library hot paths (issue 12: a raw
 * statement stays only where Drizzle costs more than 20%). On a file database (WAL) holding one
 * daily edition of 12,000 rows × 50 series and one monthly edition of 1,200 × 100:
 *  - read-back rows of GET …/data (name, kind, traded, values_json) — editionDataJson;
 *  - the value blobs of an edition — loadEditionArrays / loadEditionData (runs read this);
 *  - writing an edition's series rows in one transaction — confirmUpload.
 * Each pair runs alternately, medians of 25 rounds (11 for writes) of CPU time; the ratio is Drizzle / raw.
 *
 * Measured 2 Dec 2026 on the shared 2-core machine (load 9–15), two runs:
 *   daily 12,000 × 50    read-back 0.99–1.02, blobs 1.03–1.09, insert 1.24–1.27 (+19–20 ms CPU)
 *   monthly 1,200 × 100  read-back 1.23–1.49, blobs 1.34–1.50 (+0.3–0.7 ms), insert 0.62–0.73
 * No path slows by 20%: bench/libraries.bench.ts, raw SQL (before) → Drizzle (after), CPU medians:
 *   daily import 911 → 1002 ms (+10%, of which ~20 ms the insert above), read-back 173 → 172 ms;
 *   monthly import 179 → 187 ms (+4%), read-back 29 → 30 ms.
 * So the services keep Drizzle everywhere; these raw statements exist only here, as the yardstick.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import os, { tmpdir } from 'node:os';
import { join } from 'node:path';
import { eq, sql } from 'drizzle-orm';
import { inTransaction, openDb } from '../server/db/client';
import { libraries, libraryEditions, librarySeries, type NewLibrarySeriesRow } from '../server/db/schema/index';
import { mulberry32 } from '../lib/gmm/random';
import { median } from './median';


const dir = mkdtempSync(join(tmpdir(), 'keelson-bench-dl-'));
const db = openDb(join(dir, 'bench.db'));
const lib = db.insert(libraries).values({ name: 'Bench', visibility: 'shared' }).returning({ id: libraries.id }).get().id;

function seriesRows(editionId: number, T: number, N: number): NewLibrarySeriesRow[] {
  const rnd = mulberry32(7);
  return Array.from({ length: N }, (_, k) => {
    const v = Float64Array.from({ length: T }, () => (rnd() - 0.5) * 0.04);
    return {
      editionId,
      position: k,
      name: `S${k + 1}`,
      kind: 'asset' as const,
      traded: true,
      values: Buffer.from(v.buffer),
      valuesJson: JSON.stringify(Array.from(v)),
      count: T,
      missing: 0,
      mean: 0,
      sd: 0.01,
      min: -0.02,
      max: 0.02,
    };
  });
}

function newEdition(number: number, T: number): number {
  return db
    .insert(libraryEditions)
    .values({ libraryId: lib, number, frequency: 'daily', rowCount: T, firstDate: 'a', lastDate: 'b', dates: '[]', sourceUnits: 'decimal' })
    .returning({ id: libraryEditions.id })
    .get().id;
}

const rawInsert = db.$client.prepare(
  `insert into library_series (edition_id, position, name, kind, traded, "values", values_json, count, missing, mean, sd, min, max)
   values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
);
const rawJson = db.$client.prepare(
  'select name, kind, traded, values_json as json, case when values_json is null then "values" end as blob from library_series where edition_id = ? order by position',
);
const rawBlobs = db.$client.prepare('select name, kind, traded, "values" as "values" from library_series where edition_id = ? order by position');

const drizzleJson = (id: number) =>
  db
    .select({
      name: librarySeries.name,
      kind: librarySeries.kind,
      traded: librarySeries.traded,
      json: librarySeries.valuesJson,
      blob: sql<Buffer | null>`case when ${librarySeries.valuesJson} is null then ${librarySeries.values} end`,
    })
    .from(librarySeries)
    .where(eq(librarySeries.editionId, id))
    .orderBy(librarySeries.position)
    .all();
const drizzleBlobs = (id: number) =>
  db
    .select({ name: librarySeries.name, kind: librarySeries.kind, traded: librarySeries.traded, values: librarySeries.values })
    .from(librarySeries)
    .where(eq(librarySeries.editionId, id))
    .orderBy(librarySeries.position)
    .all();

/** CPU milliseconds of this process (user + system): steadier than wall time on a shared machine. */
function time(fn: () => void): number {
  const c0 = process.cpuUsage();
  fn();
  const c = process.cpuUsage(c0);
  return (c.user + c.system) / 1000;
}

function compare(label: string, raw: () => void, orm: () => void, rounds = 25): void {
  raw();
  orm();
  const a: number[] = [];
  const b: number[] = [];
  for (let i = 0; i < rounds; i++) {
    a.push(time(raw));
    b.push(time(orm));
  }
  const r = median(b) / median(a);
  console.log(`  ${label}: raw ${median(a).toFixed(2)} ms CPU, Drizzle ${median(b).toFixed(2)} ms CPU — ratio ${r.toFixed(2)} (${r > 1.2 ? 'OVER' : 'within'} the 1.20 limit)`);
}

console.log(`load average ${os.loadavg().map((x) => x.toFixed(1)).join(' ')} on ${os.cpus().length} cores`);
let number = 0;
for (const [label, T, N] of [
  ['daily 12,000 × 50', 12_000, 50],
  ['monthly 1,200 × 100', 1_200, 100],
] as const) {
  console.log(`\n${label}`);
  const id = newEdition(++number, T);
  const rows = seriesRows(id, T, N);
  inTransaction(db, (tx) => rows.forEach((r) => tx.insert(librarySeries).values(r).run()));
  compare('read-back rows (values_json)', () => rawJson.all(id), () => drizzleJson(id));
  compare('value blobs', () => rawBlobs.all(id), () => drizzleBlobs(id));
  // Writes: a fresh edition each round, so both sides insert the same rows into an empty edition.
  compare(
    `insert ${N} series rows in one transaction`,
    () => {
      const e = newEdition(++number, T);
      inTransaction(db, () => {
        for (const r of rows) rawInsert.run(e, r.position, r.name, r.kind, 1, r.values, r.valuesJson, r.count, r.missing, r.mean, r.sd, r.min, r.max);
      });
    },
    () => {
      const e = newEdition(++number, T);
      inTransaction(db, (tx) => {
        for (const r of rows) tx.insert(librarySeries).values({ ...r, editionId: e }).run();
      });
    },
    11,
  );
}

db.$client.close();
rmSync(dir, { recursive: true, force: true });

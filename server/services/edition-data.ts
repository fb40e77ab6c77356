/**
 * Read access to stored library editions, for the libraries routes and for runs.
 * Values are decimals (a percent upload was divided by 100 on confirm); missing values are null.
 */
import type { Db } from '../db/client';
import { KeelsonApiError } from '../../shared/errors';
import type { User } from '../../shared/auth';
import type { Frequency, SeriesKind, Visibility } from '../../shared/libraries';
import { blobToFloat64 } from './csv-import';

export interface EditionSeries {
  name: string;
  kind: 'asset' | 'factor' | 'rf';
  traded: boolean;
  /** Decimals; null = missing. */
  values: (number | null)[];
}

export interface EditionData {
  editionId: number;
  libraryId: number;
  libraryName: string;
  number: number;
  frequency: 'monthly' | 'daily';
  /** Ascending, YYYY-MM or YYYY-MM-DD. */
  dates: string[];
  series: EditionSeries[];
}

/** The columns of a library row that decide who may read it. */
export interface LibraryAccessRow {
  id: number;
  visibility: Visibility;
  ownerId: number | null;
}

/**
 * Who may read a library: admins read every library; everyone reads shared ones; a researcher
 * also reads the private libraries they own. Reviewers and desk users read shared ones only.
 */
export function canReadLibrary(user: User, lib: LibraryAccessRow): boolean {
  if (user.role === 'admin') return true;
  if (lib.visibility === 'shared') return true;
  return user.role === 'researcher' && lib.ownerId === user.id;
}

interface EditionHead {
  editionId: number;
  libraryId: number;
  libraryName: string;
  number: number;
  frequency: Frequency;
  dates: string;
  visibility: Visibility;
  ownerId: number | null;
}

function editionHead(db: Db, editionId: number): EditionHead | undefined {
  return db.$client
    .prepare(
      `select e.id as editionId, e.library_id as libraryId, l.name as libraryName, e.number as number,
              e.frequency as frequency, e.dates as dates, l.visibility as visibility, l.owner_id as ownerId
         from library_editions e join libraries l on l.id = e.library_id where e.id = ?`,
    )
    .get(editionId) as EditionHead | undefined;
}

/** Throws `not_found` when the edition does not exist or `user` may not read its library (existence does not leak). */
export function assertEditionReadable(db: Db, user: User, editionId: number): void {
  const head = Number.isInteger(editionId) ? editionHead(db, editionId) : undefined;
  if (!head || !canReadLibrary(user, { id: head.libraryId, visibility: head.visibility, ownerId: head.ownerId })) {
    throw new KeelsonApiError('not_found', `No library edition ${editionId} that you can read`);
  }
}

interface SeriesRow {
  name: string;
  kind: SeriesKind;
  traded: number;
  values: Buffer;
}

/** Raw stored series of an edition (Float64Array values with NaN for missing), in upload order. */
export function loadEditionArrays(db: Db, editionId: number): { head: EditionHead; dates: string[]; series: { name: string; kind: SeriesKind; traded: boolean; values: Float64Array }[] } {
  const head = editionHead(db, editionId);
  if (!head) throw new KeelsonApiError('not_found', `No library edition ${editionId}`);
  const rows = db.$client
    .prepare('select name, kind, traded, "values" as "values" from library_series where edition_id = ? order by position')
    .all(editionId) as SeriesRow[];
  return {
    head,
    dates: JSON.parse(head.dates) as string[],
    series: rows.map((r) => ({ name: r.name, kind: r.kind, traded: r.traded === 1, values: blobToFloat64(r.values) })),
  };
}

/** Full values of an edition (no access check: call `assertEditionReadable` first). */
export function loadEditionData(db: Db, editionId: number): EditionData {
  const { head, dates, series } = loadEditionArrays(db, editionId);
  return {
    editionId: head.editionId,
    libraryId: head.libraryId,
    libraryName: head.libraryName,
    number: head.number,
    frequency: head.frequency,
    dates,
    series: series.map((s) => ({
      name: s.name,
      kind: s.kind,
      traded: s.traded,
      values: Array.from(s.values, (x) => (Number.isNaN(x) ? null : x)),
    })),
  };
}

/**
 * Is the edition recorded by any run? Reads the `runs` table (owned by the runs module) with raw
 * SQL, guarded by sqlite_master so this works before that table exists.
 */
export function editionIsUsed(db: Db, editionId: number): boolean {
  const hasRuns = db.$client.prepare("select 1 from sqlite_master where type = 'table' and name = 'runs'").get();
  if (!hasRuns) return false;
  const cols = db.$client.prepare("select name from pragma_table_info('runs')").all() as { name: string }[];
  if (!cols.some((c) => c.name === 'edition_id')) return false;
  return db.$client.prepare('select 1 from runs where edition_id = ? limit 1').get(editionId) !== undefined;
}

/**
 * How many saved model specs point at the edition (the `model_specs` table of the runs module,
 * read with raw SQL and guarded like `editionIsUsed`).
 */
export function editionSpecCount(db: Db, editionId: number): number {
  const has = db.$client.prepare("select 1 from sqlite_master where type = 'table' and name = 'model_specs'").get();
  if (!has) return 0;
  const cols = db.$client.prepare("select name from pragma_table_info('model_specs')").all() as { name: string }[];
  if (!cols.some((c) => c.name === 'edition_id')) return 0;
  return (db.$client.prepare('select count(*) as n from model_specs where edition_id = ?').get(editionId) as { n: number }).n;
}

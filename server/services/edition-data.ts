/**
 * Read access to stored library editions, for the libraries routes and for runs.
 * Values are decimals (a percent upload was divided by 100 on confirm); missing values are null.
 */
import { count, eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { libraries, libraryEditions, librarySeries, modelSpecs, runs, type LibraryEditionRow, type LibraryRow } from '../db/schema/index';
import { KeelsonApiError } from '../../shared/errors';
import type { User } from '../../shared/auth';
import type { SeriesKind, Visibility } from '../../shared/libraries';
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

/** The edition's head row joined to its library: what reading and access checks need. */
export type EditionHead = Pick<LibraryEditionRow, 'libraryId' | 'number' | 'frequency' | 'dates' | 'firstDate' | 'lastDate'> &
  Pick<LibraryRow, 'visibility' | 'ownerId'> & { editionId: number; libraryName: string };

/** The edition's row with its library's name and access fields (no series). */
export function editionHead(db: Db, editionId: number): EditionHead | undefined {
  return db
    .select({
      editionId: libraryEditions.id,
      libraryId: libraryEditions.libraryId,
      libraryName: libraries.name,
      number: libraryEditions.number,
      frequency: libraryEditions.frequency,
      dates: libraryEditions.dates,
      firstDate: libraryEditions.firstDate,
      lastDate: libraryEditions.lastDate,
      visibility: libraries.visibility,
      ownerId: libraries.ownerId,
    })
    .from(libraryEditions)
    .innerJoin(libraries, eq(libraries.id, libraryEditions.libraryId))
    .where(eq(libraryEditions.id, editionId))
    .get();
}

/** Throws `not_found` when the edition does not exist or `user` may not read its library (existence does not leak). */
export function assertEditionReadable(db: Db, user: User, editionId: number): void {
  const head = Number.isInteger(editionId) ? editionHead(db, editionId) : undefined;
  if (!head || !canReadLibrary(user, { id: head.libraryId, visibility: head.visibility, ownerId: head.ownerId })) {
    throw new KeelsonApiError('not_found', `No library edition ${editionId} that you can read`);
  }
}

/** Raw stored series of an edition (Float64Array values with NaN for missing), in upload order. */
export function loadEditionArrays(db: Db, editionId: number): { head: EditionHead; dates: string[]; series: { name: string; kind: SeriesKind; traded: boolean; values: Float64Array }[] } {
  const head = editionHead(db, editionId);
  if (!head) throw new KeelsonApiError('not_found', `No library edition ${editionId}`);
  const rows = db
    .select({ name: librarySeries.name, kind: librarySeries.kind, traded: librarySeries.traded, values: librarySeries.values })
    .from(librarySeries)
    .where(eq(librarySeries.editionId, editionId))
    .orderBy(librarySeries.position)
    .all();
  return {
    head,
    dates: JSON.parse(head.dates) as string[],
    series: rows.map((r) => ({ name: r.name, kind: r.kind, traded: r.traded, values: blobToFloat64(r.values) })),
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

/** Is the edition recorded by any run? */
export function editionIsUsed(db: Db, editionId: number): boolean {
  return db.select({ id: runs.id }).from(runs).where(eq(runs.editionId, editionId)).limit(1).get() !== undefined;
}

/** How many saved model specs point at the edition. */
export function editionSpecCount(db: Db, editionId: number): number {
  return db.select({ n: count() }).from(modelSpecs).where(eq(modelSpecs.editionId, editionId)).get()?.n ?? 0;
}

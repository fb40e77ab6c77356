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

/**
 * Converted series of recently read editions, per database. Editions never change once written (a
 * new upload is a new edition; nothing updates library_series), and a POST /runs reads its edition
 * twice (the check, then the estimate) while a team runs many models on the same few editions, so
 * the conversion from the stored blobs is kept for the last editions read, up to
 * EDITION_CACHE_VALUES numbers in all (about 50 MB of JS arrays; a daily library of 12,000 days and
 * 110 series holds 1.3 million). The head row (library name and access fields) is read fresh on
 * every call, so a deleted edition is not found before the cache is asked. Callers treat the
 * arrays as read-only (they slice).
 */
export const EDITION_CACHE_VALUES = 2_000_000;
let cacheLimit = EDITION_CACHE_VALUES;

/** Tests: sets the cache's bound (numbers held per database); returns the previous one. */
export function setEditionCacheLimit(values: number): number {
  const prev = cacheLimit;
  cacheLimit = values;
  return prev;
}

/** What the cache holds for `db`: edition ids, least recently used first, and how many numbers. */
export function editionCacheContents(db: Db): { editionIds: number[]; values: number } {
  const cache = seriesCaches.get(db);
  return { editionIds: cache ? [...cache.byId.keys()] : [], values: cache?.values ?? 0 };
}
interface CachedSeries {
  dates: string[];
  series: EditionSeries[];
  values: number;
}
const seriesCaches = new WeakMap<object, { byId: Map<number, CachedSeries>; values: number }>();

function cachedSeries(db: Db, head: EditionHead): CachedSeries {
  let cache = seriesCaches.get(db);
  if (!cache) seriesCaches.set(db, (cache = { byId: new Map(), values: 0 }));
  const hit = cache.byId.get(head.editionId);
  if (hit) {
    cache.byId.delete(head.editionId); // most recently used last
    cache.byId.set(head.editionId, hit);
    return hit;
  }
  const { dates, series } = loadEditionArrays(db, head.editionId);
  const entry: CachedSeries = {
    dates,
    series: series.map((x) => ({ name: x.name, kind: x.kind, traded: x.traded, values: Array.from(x.values, (v) => (Number.isNaN(v) ? null : v)) })),
    values: series.reduce((n, x) => n + x.values.length, 0),
  };
  if (entry.values > cacheLimit) return entry; // too large to keep
  cache.byId.set(head.editionId, entry);
  cache.values += entry.values;
  for (const [id, e] of cache.byId) {
    if (cache.values <= cacheLimit) break;
    cache.byId.delete(id);
    cache.values -= e.values;
  }
  return entry;
}

/** Full values of an edition (no access check: call `assertEditionReadable` first). */
export function loadEditionData(db: Db, editionId: number): EditionData {
  const head = editionHead(db, editionId);
  if (!head) throw new KeelsonApiError('not_found', `No library edition ${editionId}`);
  const { dates, series } = cachedSeries(db, head);
  return {
    editionId: head.editionId,
    libraryId: head.libraryId,
    libraryName: head.libraryName,
    number: head.number,
    frequency: head.frequency,
    dates,
    series,
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

/**
 * Edition metadata for the spec form: names, kinds, traded flags and dates, no values.
 * Access is the edition's own (`editionIdOf`: not readable or not there → 404, existence does not leak).
 */
import { asc, eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { librarySeries } from '../db/schema/index';
import type { User } from '../../shared/auth';
import { KeelsonApiError } from '../../shared/errors';
import type { EditionMeta } from '../../shared/edition-meta';
import { editionHead } from './edition-data';
import { editionIdOf } from './libraries';

export function getEditionMeta(db: Db, user: User, libraryId: number, n: number): EditionMeta {
  const editionId = editionIdOf(db, user, libraryId, n);
  const head = editionHead(db, editionId);
  if (!head) throw new KeelsonApiError('not_found', `No library edition ${editionId}`);
  const series = db
    .select({ name: librarySeries.name, kind: librarySeries.kind, traded: librarySeries.traded })
    .from(librarySeries)
    .where(eq(librarySeries.editionId, editionId))
    .orderBy(asc(librarySeries.position))
    .all();
  const dates = JSON.parse(head.dates) as string[];
  return {
    editionId: head.editionId,
    libraryId: head.libraryId,
    libraryName: head.libraryName,
    number: head.number,
    frequency: head.frequency,
    firstDate: head.firstDate,
    lastDate: head.lastDate,
    T: dates.length,
    dates,
    series,
    riskFree: series.find((s) => s.kind === 'rf')?.name ?? null,
  };
}

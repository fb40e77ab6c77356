/**
 * Model specs: saved, named, copied, edited, archived and restored. A spec names an edition;
 * reading or using it needs read access to that edition's library. Only the author (or an admin)
 * edits, archives or restores a spec. An archived spec is hidden from the list (unless asked for),
 * cannot be edited or started until it is restored, and can still be read and copied; its runs
 * stay readable.
 */
import { and, desc, eq, isNull } from 'drizzle-orm';
import type { Db } from '../db/client';
import { inTransaction } from '../db/client';
import { modelSpecs, users } from '../db/schema/index';
import { KeelsonApiError } from '../../shared/errors';
import type { User } from '../../shared/auth';
import {
  checkSpecAgainstEdition,
  modelSpecSchema,
  type ModelSpec,
  type SavedSpec,
  type SpecCheck,
} from '../../shared/specs';
import { assertEditionReadable, loadEditionData, type EditionData } from './edition-data';
import { audit } from './audit';
import { nameOf } from './users';

type SpecRow = typeof modelSpecs.$inferSelect;

function toSavedSpec(row: SpecRow, authorName: string): SavedSpec {
  return {
    id: row.id,
    name: row.name,
    authorId: row.authorId,
    authorName,
    editionId: row.editionId,
    libraryId: row.libraryId,
    libraryName: row.libraryName,
    editionNumber: row.editionNumber,
    spec: modelSpecSchema.parse(JSON.parse(row.spec)),
    copiedFromId: row.copiedFromId,
    archivedAt: row.archivedAt ?? null,
    createdAt: row.createdAt,
    updatedAt: row.updatedAt,
  };
}

/** Is the edition readable by `user`? (false instead of a not_found error) */
export function canReadEdition(db: Db, user: User, editionId: number, cache?: Map<number, boolean>): boolean {
  const hit = cache?.get(editionId);
  if (hit !== undefined) return hit;
  let ok = true;
  try {
    assertEditionReadable(db, user, editionId);
  } catch (e) {
    if (e instanceof KeelsonApiError && (e.code === 'not_found' || e.code === 'forbidden')) ok = false;
    else throw e;
  }
  cache?.set(editionId, ok);
  return ok;
}

/**
 * Loads the edition (after the read check) and checks the spec against it. Throws a 422
 * `unprocessable` naming each problem (unknown series, wrong kind, T ≤ N + K, lag ≥ T).
 */
export function loadAndCheck(db: Db, user: User, editionId: number, spec: ModelSpec): { data: EditionData; check: SpecCheck } {
  assertEditionReadable(db, user, editionId);
  const data = loadEditionData(db, editionId);
  const check = checkSpecAgainstEdition(spec, data);
  if (check.issues.length > 0) {
    throw new KeelsonApiError(
      'unprocessable',
      `The spec does not fit edition ${data.number} of ${data.libraryName}: ${check.issues[0].message}`,
      check.issues.map((i) => ({ path: ['spec', ...i.path], message: i.message })),
    );
  }
  return { data, check };
}


function findRow(db: Db, user: User, id: number): SpecRow {
  const row = db.select().from(modelSpecs).where(eq(modelSpecs.id, id)).get();
  if (!row || !canReadEdition(db, user, row.editionId)) throw new KeelsonApiError('not_found', `No model spec ${id}`);
  return row;
}

export function getSpec(db: Db, user: User, id: number): SavedSpec {
  const row = findRow(db, user, id);
  return toSavedSpec(row, nameOf(db, row.authorId));
}

function assertNotArchived(row: SpecRow, doing: string): void {
  if (row.archivedAt) throw new KeelsonApiError('conflict', `Model spec ${row.id} (“${row.name}”) is archived; restore it before you ${doing}`);
}

/** The frozen spec and edition of a saved spec, for starting a run (409 for an archived spec). */
export function specForRun(db: Db, user: User, id: number): { row: SpecRow; spec: ModelSpec } {
  const row = findRow(db, user, id);
  assertNotArchived(row, 'start a run of it');
  return { row, spec: modelSpecSchema.parse(JSON.parse(row.spec)) };
}

/** The saved spec row if it exists and is readable (archived or not), else null. */
export function findSpecRow(db: Db, user: User, id: number): SpecRow | null {
  const row = db.select().from(modelSpecs).where(eq(modelSpecs.id, id)).get();
  return row && canReadEdition(db, user, row.editionId) ? row : null;
}

/** Specs the user may read, newest first; archived ones only with `archived: true` (then listed too). */
export function listSpecs(db: Db, user: User, opts: { mine?: boolean; editionId?: number; archived?: boolean } = {}): SavedSpec[] {
  const conds = [];
  if (opts.mine) conds.push(eq(modelSpecs.authorId, user.id));
  if (opts.editionId) conds.push(eq(modelSpecs.editionId, opts.editionId));
  if (!opts.archived) conds.push(isNull(modelSpecs.archivedAt));
  const rows = db
    .select({ s: modelSpecs, authorName: users.name })
    .from(modelSpecs)
    .innerJoin(users, eq(users.id, modelSpecs.authorId))
    .where(conds.length ? and(...conds) : undefined)
    .orderBy(desc(modelSpecs.updatedAt), desc(modelSpecs.id))
    .limit(500)
    .all();
  const cache = new Map<number, boolean>();
  return rows.filter((r) => canReadEdition(db, user, r.s.editionId, cache)).map((r) => toSavedSpec(r.s, r.authorName));
}

/**
 * Inserts a checked spec with its audit line, inside the caller's transaction (the first-stage
 * copy of a run writes the spec and its run in one transaction).
 */
export function insertSpec(tx: Db, user: User, data: Pick<EditionData, 'editionId' | 'libraryId' | 'libraryName' | 'number'>, name: string, spec: ModelSpec, copiedFromId: number | null): SavedSpec {
  const r = tx
    .insert(modelSpecs)
    .values({
      name,
      authorId: user.id,
      editionId: data.editionId,
      libraryId: data.libraryId,
      libraryName: data.libraryName,
      editionNumber: data.number,
      spec: JSON.stringify(spec),
      copiedFromId,
    })
    .returning()
    .get();
  audit(tx, user.id, copiedFromId ? 'spec.copy' : 'spec.create', { specId: r.id, copiedFromId });
  return toSavedSpec(r, user.name);
}

export function createSpec(db: Db, user: User, body: { name: string; editionId: number; spec: ModelSpec }, copiedFromId: number | null = null): SavedSpec {
  const { data } = loadAndCheck(db, user, body.editionId, body.spec);
  return inTransaction(db, (tx) => insertSpec(tx, user, data, body.name, body.spec, copiedFromId));
}

function assertMayEdit(user: User, row: SpecRow, what = 'edit it; copy it to make your own'): void {
  if (row.authorId !== user.id && user.role !== 'admin')
    throw new KeelsonApiError('forbidden', `Only the author of a spec (or an admin) may ${what}`);
}

export function updateSpec(db: Db, user: User, id: number, patch: { name?: string; editionId?: number; spec?: ModelSpec }): SavedSpec {
  const row = findRow(db, user, id);
  assertMayEdit(user, row);
  assertNotArchived(row, 'edit it');
  const editionId = patch.editionId ?? row.editionId;
  const spec = patch.spec ?? modelSpecSchema.parse(JSON.parse(row.spec));
  const { data } = loadAndCheck(db, user, editionId, spec);
  const updated = inTransaction(db, (tx) => {
    const r = tx
      .update(modelSpecs)
      .set({
        name: patch.name ?? row.name,
        editionId: data.editionId,
        libraryId: data.libraryId,
        libraryName: data.libraryName,
        editionNumber: data.number,
        spec: JSON.stringify(spec),
        updatedAt: new Date().toISOString(),
      })
      .where(eq(modelSpecs.id, id))
      .returning()
      .get();
    audit(tx, user.id, 'spec.update', { specId: id });
    return r;
  });
  return toSavedSpec(updated, nameOf(db, updated.authorId));
}

/**
 * Archives (`archived: true`) or restores a spec: author or admin. Archiving an archived spec (or
 * restoring a live one) changes nothing and answers the spec as it is.
 */
export function setSpecArchived(db: Db, user: User, id: number, archived: boolean): SavedSpec {
  const row = findRow(db, user, id);
  assertMayEdit(user, row, archived ? 'archive it' : 'restore it');
  if (!!row.archivedAt === archived) return toSavedSpec(row, nameOf(db, row.authorId));
  const updated = inTransaction(db, (tx) => {
    const r = tx
      .update(modelSpecs)
      .set({ archivedAt: archived ? new Date().toISOString() : null })
      .where(eq(modelSpecs.id, id))
      .returning()
      .get();
    audit(tx, user.id, archived ? 'spec.archive' : 'spec.restore', { specId: id });
    return r;
  });
  return toSavedSpec(updated, nameOf(db, updated.authorId));
}

export function copySpec(db: Db, user: User, id: number, name?: string): SavedSpec {
  const src = getSpec(db, user, id);
  return createSpec(db, user, { name: name ?? `Copy of ${src.name}`.slice(0, 120), editionId: src.editionId, spec: src.spec }, src.id);
}

/** Checks a spec against an edition without saving: N, K, T, df and the issues (never throws for misfit). */
export function checkSpec(db: Db, user: User, editionId: number, spec: ModelSpec): SpecCheck & { libraryName: string; editionNumber: number } {
  assertEditionReadable(db, user, editionId);
  const data = loadEditionData(db, editionId);
  return { ...checkSpecAgainstEdition(spec, data), libraryName: data.libraryName, editionNumber: data.number };
}

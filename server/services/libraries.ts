/**
 * Return libraries: pending uploads, confirm into an edition, listing, sharing, archive, delete.
 * Routes call these; every multi-row write runs in one transaction.
 */
import { randomBytes } from 'node:crypto';
import { csvLine } from '../../shared/csv';
import type { Db } from '../db/client';
import { inTransaction } from '../db/client';
import { KeelsonApiError } from '../../shared/errors';
import type { User } from '../../shared/auth';
import type {
  ConfirmResponse,
  ConfirmUploadBody,
  EditionDetail,
  EditionSummary,
  Frequency,
  LibraryDetail,
  LibraryListQuery,
  LibrarySummary,
  SeriesKind,
  Upload,
  UploadColumn,
  UploadTarget,
  UploadWarning,
  Units,
  Visibility,
} from '../../shared/libraries';
import { audit } from './audit';
import { blobToFloat64, columnStats, foldName, looksRiskFree, packColumns, parseReturnCsv } from './csv-import';
import { canReadLibrary, editionIsUsed, editionSpecCount, loadEditionArrays } from './edition-data';

const UPLOAD_TTL_MS = 24 * 3600 * 1000;

interface LibraryRow {
  id: number;
  name: string;
  description: string;
  visibility: Visibility;
  ownerId: number | null;
  ownerName: string | null;
  lastEditionNumber: number;
  archivedAt: string | null;
  createdAt: string;
}

interface EditionRow {
  id: number;
  libraryId: number;
  number: number;
  frequency: Frequency;
  rowCount: number;
  firstDate: string;
  lastDate: string;
  sourceUnits: Units;
  fileName: string;
  createdAt: string;
  createdBy: number | null;
  createdByName: string | null;
  seriesCount: number;
}

interface UploadPreview {
  units: Units;
  warnings: UploadWarning[];
  /** Previews stored before suggestions lack suggestedTraded and suggestion. */
  series: (Omit<UploadColumn, 'suggestedTraded' | 'suggestion'> & Partial<Pick<UploadColumn, 'suggestedTraded' | 'suggestion'>>)[];
  target?: UploadTarget | null;
  rows: number;
  firstDate: string;
  lastDate: string;
}

// ───────────────────────── uploads ─────────────────────────

function purgeExpiredUploads(db: Db): void {
  db.$client.prepare('delete from library_uploads where expires_at < ?').run(new Date().toISOString());
}

const KIND_WORDS: Readonly<Record<SeriesKind, string>> = { asset: 'test asset', factor: 'factor', rf: 'risk-free' };
function kindWords(kind: SeriesKind, traded: boolean): string {
  return kind === 'factor' ? `factor (${traded ? 'traded' : 'not traded'})` : KIND_WORDS[kind];
}

interface KnownSeries {
  name: string;
  kind: SeriesKind;
  traded: boolean;
}

/**
 * Factors and risk-free series of the latest editions of the libraries `user` owns and of the
 * shared ones (archived libraries and `exceptLibrary` left out), by folded name. The user's own
 * libraries win over shared ones, newer editions over older.
 */
function knownSeriesElsewhere(db: Db, user: User, exceptLibrary: number | null): Map<string, KnownSeries & { libraryName: string; edition: number; own: boolean }> {
  const rows = db.$client
    .prepare(
      `select s.name, s.kind, s.traded, l.name as libraryName, e.number as edition, (l.owner_id = ?) as own, e.id as editionId
         from library_series s
         join library_editions e on e.id = s.edition_id
         join libraries l on l.id = e.library_id
        where s.kind in ('factor', 'rf') and l.archived_at is null and l.id != ?
          and (l.owner_id = ? or l.visibility = 'shared')
          and e.number = (select max(e2.number) from library_editions e2 where e2.library_id = l.id)
        order by own desc, e.id desc, s.position`,
    )
    .all(user.id, exceptLibrary ?? 0, user.id) as { name: string; kind: SeriesKind; traded: number; libraryName: string; edition: number; own: number }[];
  const out = new Map<string, KnownSeries & { libraryName: string; edition: number; own: boolean }>();
  for (const r of rows) {
    const key = foldName(r.name);
    if (key && !out.has(key)) out.set(key, { name: r.name, kind: r.kind, traded: r.traded === 1, libraryName: r.libraryName, edition: r.edition, own: r.own === 1 });
  }
  return out;
}

/**
 * Suggested kind and traded flag of each column, with the reason the review shows. For a new
 * edition (`target` set) every series found by name in the library's latest edition keeps its kind
 * and traded flag (exact name first, then the same name ignoring case and punctuation); the others
 * are reported as new, and the edition's series missing from the file as gone. A column not found
 * there is suggested a factor (or risk-free) when a factor (risk-free series) of that name is in the
 * latest edition of another of the user's libraries or of a shared one, else risk-free when its name
 * reads like a risk-free rate, else a test asset. At most one risk-free suggestion.
 */
export function suggestSeries(
  db: Db,
  user: User,
  series: readonly UploadColumn[],
  target: { id: number; name: string } | null,
): { series: UploadColumn[]; target: UploadTarget | null } {
  let previous: { number: number; series: KnownSeries[] } | null = null;
  if (target) {
    const ed = db.$client.prepare('select id, number from library_editions where library_id = ? order by number desc limit 1').get(target.id) as { id: number; number: number } | undefined;
    if (ed) {
      const rows = db.$client.prepare('select name, kind, traded from library_series where edition_id = ? order by position').all(ed.id) as { name: string; kind: SeriesKind; traded: number }[];
      previous = { number: ed.number, series: rows.map((r) => ({ name: r.name, kind: r.kind, traded: r.traded === 1 })) };
    }
  }
  const elsewhere = knownSeriesElsewhere(db, user, target?.id ?? null);
  const used = new Set<string>();
  const byExact = new Map((previous?.series ?? []).map((p) => [p.name, p]));
  // Exact names first, so a folded match never steals a series another column names exactly.
  const matches = series.map((c) => {
    const hit = byExact.get(c.name);
    if (hit) used.add(hit.name);
    return hit ?? null;
  });
  series.forEach((c, i) => {
    if (matches[i] || !previous) return;
    const key = foldName(c.name);
    const hit = previous.series.find((p) => !used.has(p.name) && foldName(p.name) === key);
    if (hit) {
      used.add(hit.name);
      matches[i] = hit;
    }
  });

  let rfTaken = matches.find((m) => m?.kind === 'rf')?.name ?? null;
  const out: UploadColumn[] = series.map((c, i) => {
    const m = matches[i];
    if (m && previous) {
      const same = m.name === c.name ? '' : ` (named ${m.name} there)`;
      return {
        ...c,
        suggestedKind: m.kind,
        suggestedTraded: m.kind === 'factor' ? m.traded : true,
        suggestion: { source: 'previous_edition' as const, reason: `Kept from edition ${previous.number}${same}: ${kindWords(m.kind, m.traded)}` },
      };
    }
    const prefix = previous ? `New in this file (not in edition ${previous.number}). ` : '';
    const known = elsewhere.get(foldName(c.name));
    if (known && !(known.kind === 'rf' && rfTaken !== null)) {
      if (known.kind === 'rf') rfTaken = c.name;
      const where = known.own ? `your library ${known.libraryName}` : `the shared library ${known.libraryName}`;
      return {
        ...c,
        suggestedKind: known.kind,
        suggestedTraded: known.kind === 'factor' ? known.traded : true,
        suggestion: {
          source: 'other_library' as const,
          reason: `${prefix}Suggested ${kindWords(known.kind, known.traded)}: ${known.name} is a ${known.kind === 'rf' ? 'risk-free series' : 'factor'} in edition ${known.edition} of ${where}`,
        },
      };
    }
    if (c.suggestedKind === 'rf' || looksRiskFree(c.name)) {
      if (rfTaken === null) {
        rfTaken = c.name;
        return { ...c, suggestedKind: 'rf' as const, suggestedTraded: true, suggestion: { source: 'name' as const, reason: `${prefix}Suggested risk-free: the name ${c.name} reads as a risk-free rate` } };
      }
      return {
        ...c,
        suggestedKind: 'asset' as const,
        suggestedTraded: true,
        suggestion: { source: 'none' as const, reason: `${prefix}${c.name} reads as a risk-free rate, but ${rfTaken} is the risk-free series; a library keeps at most one` },
      };
    }
    return { ...c, suggestedKind: 'asset' as const, suggestedTraded: true, suggestion: { source: 'none' as const, reason: `${prefix}No series of this name elsewhere: a test asset unless you choose otherwise` } };
  });
  const uploadTarget: UploadTarget | null = target
    ? {
        libraryId: target.id,
        libraryName: target.name,
        edition: previous?.number ?? null,
        newSeries: previous ? series.filter((_, i) => !matches[i]).map((c) => c.name) : [],
        goneSeries: previous ? previous.series.filter((p) => !used.has(p.name)).map((p) => p.name) : [],
      }
    : null;
  return { series: out, target: uploadTarget };
}

/** Throws unless `user` may add an edition to the library (readable, allowed, not archived). */
function assertCanAddEdition(db: Db, user: User, libraryId: number): LibraryRow {
  const lib = libraryRow(db, libraryId);
  if (!lib || !canReadLibrary(user, lib)) throw new KeelsonApiError('not_found', `No library ${libraryId} that you can read`);
  if (!permissions(user, { ...lib, archivedAt: null }).addEdition) {
    throw new KeelsonApiError('forbidden', lib.visibility === 'shared' ? 'Only admins add editions to shared libraries' : 'Only the owner or an admin adds editions to a private library');
  }
  if (lib.archivedAt) throw new KeelsonApiError('conflict', `Library ${lib.name} is archived; restore it before adding an edition`);
  return lib;
}

/**
 * Parses an uploaded CSV and keeps it as a pending upload of `user` (nothing else is written).
 * With `libraryId` the upload is meant as the next edition of that library: series kinds are carried
 * over from its latest edition by name, and the new and gone series are listed.
 */
export function createUpload(db: Db, user: User, file: { name: string; buffer: Buffer }, opts: { libraryId?: number } = {}): Upload {
  const lib = opts.libraryId !== undefined ? assertCanAddEdition(db, user, opts.libraryId) : null;
  const parsed = parseReturnCsv(file.buffer);
  const id = randomBytes(12).toString('base64url');
  const T = parsed.dates.length;
  const suggested = suggestSeries(db, user, parsed.series, lib ? { id: lib.id, name: lib.name } : null);
  const preview: UploadPreview = {
    units: parsed.units,
    warnings: parsed.warnings,
    series: suggested.series,
    target: suggested.target,
    rows: T,
    firstDate: parsed.dates[0]!,
    lastDate: parsed.dates[T - 1]!,
  };
  const expiresAt = new Date(Date.now() + UPLOAD_TTL_MS).toISOString();
  const fileName = (file.name || 'upload.csv').slice(0, 200);
  inTransaction(db, () => {
    purgeExpiredUploads(db);
    db.$client
      .prepare(
        `insert into library_uploads (id, owner_id, file_name, frequency, columns, dates, "values", preview, expires_at)
         values (?, ?, ?, ?, ?, ?, ?, ?, ?)`,
      )
      .run(id, user.id, fileName, parsed.frequency, JSON.stringify(parsed.columns), JSON.stringify(parsed.dates), packColumns(parsed.values, T), JSON.stringify(preview), expiresAt);
  });
  return toUpload(id, fileName, parsed.frequency, parsed.columns, preview, expiresAt);
}

function toUpload(id: string, fileName: string, frequency: Frequency, columns: string[], p: UploadPreview, expiresAt: string): Upload {
  return {
    id,
    fileName,
    columns,
    frequency,
    rows: p.rows,
    firstDate: p.firstDate,
    lastDate: p.lastDate,
    units: p.units,
    warnings: p.warnings,
    // Uploads kept from before suggestions carried a reason read as "no suggestion".
    series: p.series.map((c) => ({ ...c, suggestedTraded: c.suggestedTraded ?? true, suggestion: c.suggestion ?? { source: 'none' as const, reason: '' } })),
    target: p.target ?? null,
    expiresAt,
  };
}

interface UploadRow {
  id: string;
  ownerId: number;
  fileName: string;
  frequency: Frequency;
  columns: string;
  dates: string;
  values: Buffer;
  preview: string;
  expiresAt: string;
}

function findUpload(db: Db, user: User, id: string): UploadRow {
  const row = db.$client
    .prepare(
      `select id, owner_id as ownerId, file_name as fileName, frequency, columns, dates, "values" as "values", preview, expires_at as expiresAt
         from library_uploads where id = ?`,
    )
    .get(id) as UploadRow | undefined;
  // Only the uploader sees a pending upload; an expired one is as good as gone.
  if (!row || row.ownerId !== user.id || row.expiresAt < new Date().toISOString()) {
    throw new KeelsonApiError('not_found', 'No pending upload with that id (uploads are kept for a day, for the person who uploaded them)');
  }
  return row;
}

export function getUpload(db: Db, user: User, id: string): Upload {
  const r = findUpload(db, user, id);
  return toUpload(r.id, r.fileName, r.frequency, JSON.parse(r.columns) as string[], JSON.parse(r.preview) as UploadPreview, r.expiresAt);
}

export function discardUpload(db: Db, user: User, id: string): void {
  findUpload(db, user, id);
  db.$client.prepare('delete from library_uploads where id = ?').run(id);
}

/** Turns a pending upload into a new library (or a new edition of `body.libraryId`), in one transaction. */
export function confirmUpload(db: Db, user: User, uploadId: string, body: ConfirmUploadBody): ConfirmResponse {
  const up = findUpload(db, user, uploadId);
  const columns = JSON.parse(up.columns) as string[];
  const dates = JSON.parse(up.dates) as string[];
  const T = dates.length;

  // Series choices
  const seen = new Set<string>();
  const picks = body.series.map((s, i) => {
    const k = columns.indexOf(s.name);
    if (k < 0) {
      throw new KeelsonApiError('validation_failed', `Series ${JSON.stringify(s.name)} is not a column of this upload`, [
        { path: ['series', i, 'name'], message: `Not a column of the upload (columns: ${columns.slice(0, 8).join(', ')}${columns.length > 8 ? ', …' : ''})` },
      ]);
    }
    if (seen.has(s.name)) {
      throw new KeelsonApiError('validation_failed', `Series ${JSON.stringify(s.name)} is listed twice`, [{ path: ['series', i, 'name'], message: 'Listed twice' }]);
    }
    seen.add(s.name);
    return { column: k, name: s.name, kind: s.kind as SeriesKind, traded: s.kind === 'factor' ? (s.traded ?? false) : s.kind === 'asset' || s.kind === 'rf' };
  });
  if (picks.filter((p) => p.kind === 'rf').length > 1) {
    throw new KeelsonApiError('validation_failed', 'Mark at most one series as risk-free', [{ path: ['series'], message: 'More than one risk-free series' }]);
  }

  const all = blobToFloat64(up.values);
  const scale = body.units === 'percent' ? 0.01 : 1;

  const result = inTransaction(db, (tx) => {
    const c = db.$client;
    let libraryId: number;
    let libraryName: string;
    if (body.libraryId !== undefined) {
      const lib = assertCanAddEdition(db, user, body.libraryId);
      if (body.visibility && body.visibility !== lib.visibility) {
        throw new KeelsonApiError('conflict', `Library ${lib.name} is ${lib.visibility}; an edition keeps the library's visibility (use publish to share a private library)`);
      }
      const freq = c.prepare('select frequency from library_editions where library_id = ? order by number desc limit 1').get(lib.id) as { frequency: Frequency } | undefined;
      if (freq && freq.frequency !== up.frequency) {
        throw new KeelsonApiError('conflict', `Library ${lib.name} holds ${freq.frequency} series; this upload is ${up.frequency}`);
      }
      libraryId = lib.id;
      libraryName = lib.name;
    } else {
      if (body.visibility === 'shared' && user.role !== 'admin') {
        throw new KeelsonApiError('forbidden', 'Only admins publish shared libraries; save it as private and ask an admin to share it');
      }
      const info = c
        .prepare('insert into libraries (name, description, visibility, owner_id) values (?, ?, ?, ?)')
        .run(body.name!, body.description ?? '', body.visibility!, user.id);
      libraryId = Number(info.lastInsertRowid);
      libraryName = body.name!;
    }
    const next = (c.prepare('select last_edition_number as n from libraries where id = ?').get(libraryId) as { n: number }).n + 1;
    c.prepare('update libraries set last_edition_number = ? where id = ?').run(next, libraryId);
    const ed = c
      .prepare(
        `insert into library_editions (library_id, number, frequency, row_count, first_date, last_date, dates, source_units, file_name, created_by)
         values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
      )
      .run(libraryId, next, up.frequency, T, dates[0]!, dates[T - 1]!, up.dates, body.units, up.fileName, user.id);
    const editionId = Number(ed.lastInsertRowid);
    const ins = c.prepare(
      `insert into library_series (edition_id, position, name, kind, traded, "values", values_json, count, missing, mean, sd, min, max)
       values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
    );
    picks.forEach((p, pos) => {
      const v = all.slice(p.column * T, (p.column + 1) * T);
      if (scale !== 1) for (let t = 0; t < T; t++) v[t] = v[t]! * scale;
      const st = columnStats(v);
      ins.run(editionId, pos, p.name, p.kind, p.traded ? 1 : 0, Buffer.from(v.buffer, v.byteOffset, v.byteLength), valuesJson(v), st.count, st.missing, st.mean, st.sd, st.min, st.max);
    });
    c.prepare('delete from library_uploads where id = ?').run(up.id);
    audit(tx, user.id, 'library.edition_added', { libraryId, libraryName, edition: next, editionId, rows: T, series: picks.length, units: body.units, file: up.fileName, newLibrary: body.libraryId === undefined });
    return { library: { id: libraryId, name: libraryName }, edition: { id: editionId, number: next } };
  });
  return result;
}

// ───────────────────────── libraries ─────────────────────────

function libraryRow(db: Db, id: number): LibraryRow | undefined {
  return db.$client
    .prepare(
      `select l.id, l.name, l.description, l.visibility, l.owner_id as ownerId, u.name as ownerName,
              l.last_edition_number as lastEditionNumber, l.archived_at as archivedAt, l.created_at as createdAt
         from libraries l left join users u on u.id = l.owner_id where l.id = ?`,
    )
    .get(id) as LibraryRow | undefined;
}

/** The library if `user` may read it, else `not_found` (never 403: existence does not leak). */
function readableLibrary(db: Db, user: User, id: number): LibraryRow {
  const lib = Number.isInteger(id) && id > 0 ? libraryRow(db, id) : undefined;
  if (!lib || !canReadLibrary(user, lib)) throw new KeelsonApiError('not_found', `No library ${id} that you can read`);
  return lib;
}

function permissions(user: User, lib: LibraryRow): LibrarySummary['can'] {
  const admin = user.role === 'admin';
  const ownPrivate = user.role === 'researcher' && lib.visibility === 'private' && lib.ownerId === user.id;
  return {
    addEdition: !lib.archivedAt && (admin || ownPrivate),
    publish: admin && lib.visibility === 'private' && !lib.archivedAt,
    unpublish: admin && lib.visibility === 'shared',
    archive: admin || ownPrivate,
    deleteEdition: admin,
  };
}

const EDITION_SELECT = `select e.id, e.library_id as libraryId, e.number, e.frequency, e.row_count as rowCount,
    e.first_date as firstDate, e.last_date as lastDate, e.source_units as sourceUnits, e.file_name as fileName,
    e.created_at as createdAt, e.created_by as createdBy, u.name as createdByName,
    (select count(*) from library_series s where s.edition_id = e.id) as seriesCount
  from library_editions e left join users u on u.id = e.created_by`;

function editionRows(db: Db, libraryId: number): EditionRow[] {
  return db.$client.prepare(`${EDITION_SELECT} where e.library_id = ? order by e.number desc`).all(libraryId) as EditionRow[];
}

function toEditionSummary(db: Db, e: EditionRow): EditionSummary {
  return {
    id: e.id,
    number: e.number,
    frequency: e.frequency,
    rows: e.rowCount,
    firstDate: e.firstDate,
    lastDate: e.lastDate,
    seriesCount: e.seriesCount,
    sourceUnits: e.sourceUnits,
    fileName: e.fileName,
    createdAt: e.createdAt,
    createdBy: e.createdBy !== null ? { id: e.createdBy, name: e.createdByName ?? '' } : null,
    used: editionIsUsed(db, e.id),
  };
}

function toSummary(user: User, lib: LibraryRow, editions: EditionRow[]): LibrarySummary {
  const latest = editions[0];
  return {
    id: lib.id,
    name: lib.name,
    description: lib.description,
    visibility: lib.visibility,
    owner: lib.ownerId !== null ? { id: lib.ownerId, name: lib.ownerName ?? '' } : null,
    archived: lib.archivedAt !== null,
    archivedAt: lib.archivedAt,
    createdAt: lib.createdAt,
    frequency: latest?.frequency ?? null,
    firstDate: latest?.firstDate ?? null,
    lastDate: latest?.lastDate ?? null,
    editionCount: editions.length,
    latestEdition: latest?.number ?? null,
    seriesCount: latest?.seriesCount ?? 0,
    can: permissions(user, lib),
  };
}

export function listLibraries(db: Db, user: User, q: LibraryListQuery): LibrarySummary[] {
  const rows = db.$client
    .prepare(
      `select l.id, l.name, l.description, l.visibility, l.owner_id as ownerId, u.name as ownerName,
              l.last_edition_number as lastEditionNumber, l.archived_at as archivedAt, l.created_at as createdAt
         from libraries l left join users u on u.id = l.owner_id order by l.visibility desc, l.name collate nocase, l.id`,
    )
    .all() as LibraryRow[];
  const all = db.$client.prepare(`${EDITION_SELECT} order by e.number desc`).all() as EditionRow[];
  const byLib = new Map<number, EditionRow[]>();
  for (const e of all) {
    const a = byLib.get(e.libraryId) ?? [];
    a.push(e);
    byLib.set(e.libraryId, a);
  }
  const needle = q.q?.toLowerCase();
  return rows
    .filter((l) => canReadLibrary(user, l))
    .filter((l) => (q.archived === 'hide' ? !l.archivedAt : q.archived === 'only' ? !!l.archivedAt : true))
    .filter((l) => (q.scope === 'shared' ? l.visibility === 'shared' : q.scope === 'mine' ? l.ownerId === user.id && l.visibility === 'private' : true))
    .filter((l) => !needle || l.name.toLowerCase().includes(needle) || l.description.toLowerCase().includes(needle))
    .map((l) => toSummary(user, l, byLib.get(l.id) ?? []))
    .filter((s) => !q.frequency || s.frequency === q.frequency)
    .filter((s) => {
      if (!q.covers) return true;
      if (!s.firstDate || !s.lastDate) return false;
      const n = s.firstDate.length;
      const d = q.covers.slice(0, n);
      return s.firstDate.slice(0, d.length) <= d && d <= s.lastDate.slice(0, d.length);
    });
}

export function getLibrary(db: Db, user: User, id: number): LibraryDetail {
  const lib = readableLibrary(db, user, id);
  const eds = editionRows(db, lib.id);
  return { ...toSummary(user, lib, eds), editions: eds.map((e) => toEditionSummary(db, e)) };
}

function editionOf(db: Db, user: User, libraryId: number, n: number): { lib: LibraryRow; edition: EditionRow } {
  const lib = readableLibrary(db, user, libraryId);
  const edition = Number.isInteger(n)
    ? (db.$client.prepare(`${EDITION_SELECT} where e.library_id = ? and e.number = ?`).get(lib.id, n) as EditionRow | undefined)
    : undefined;
  if (!edition) throw new KeelsonApiError('not_found', `Library ${lib.name} has no edition ${n}`);
  return { lib, edition };
}

/** Edition id of edition `n` of a library the user can read. */
export function editionIdOf(db: Db, user: User, libraryId: number, n: number): number {
  return editionOf(db, user, libraryId, n).edition.id;
}

export function getEdition(db: Db, user: User, libraryId: number, n: number): EditionDetail {
  const { lib, edition } = editionOf(db, user, libraryId, n);
  const series = db.$client
    .prepare('select name, kind, traded, count, missing, mean, sd, min, max from library_series where edition_id = ? order by position')
    .all(edition.id) as { name: string; kind: SeriesKind; traded: number; count: number; missing: number; mean: number | null; sd: number | null; min: number | null; max: number | null }[];
  return {
    ...toEditionSummary(db, edition),
    libraryId: lib.id,
    libraryName: lib.name,
    series: series.map((s) => ({
      name: s.name,
      kind: s.kind,
      traded: s.traded === 1,
      stats: { count: s.count, missing: s.missing, mean: s.mean, sd: s.sd, min: s.min, max: s.max },
    })),
  };
}

/** JSON array text of a series' values: NaN → null, numbers in shortest round-trip form (JSON.stringify's own). */
export function valuesJson(v: Float64Array): string {
  return JSON.stringify(Array.from(v));
}

/**
 * The full values of an edition as a JSON text. The hot read path: each series' JSON array text
 * was written on confirm, so this only concatenates stored text (a row without it is formatted here).
 */
export function editionDataJson(db: Db, user: User, libraryId: number, n: number): string {
  const { lib, edition } = editionOf(db, user, libraryId, n);
  const head = db.$client.prepare('select dates from library_editions where id = ?').get(edition.id) as { dates: string };
  const rows = db.$client
    .prepare('select name, kind, traded, values_json as json, case when values_json is null then "values" end as blob from library_series where edition_id = ? order by position')
    .all(edition.id) as { name: string; kind: SeriesKind; traded: number; json: string | null; blob: Buffer | null }[];
  const parts: string[] = [
    `{"editionId":${edition.id},"libraryId":${lib.id},"libraryName":${JSON.stringify(lib.name)},"number":${edition.number},"frequency":"${edition.frequency}","dates":${head.dates},"series":[`,
  ];
  rows.forEach((r, i) => {
    const values = r.json ?? valuesJson(blobToFloat64(r.blob!));
    parts.push(`${i ? ',' : ''}{"name":${JSON.stringify(r.name)},"kind":"${r.kind}","traded":${r.traded === 1},"values":${values}}`);
  });
  parts.push(']}');
  return parts.join('');
}

/** CSV of an edition in decimals: `date` then one column per series, full precision, empty = missing. */
export function exportEditionCsv(db: Db, user: User, libraryId: number, n: number): { fileName: string; csv: string } {
  const { lib, edition } = editionOf(db, user, libraryId, n);
  const { dates, series } = loadEditionArrays(db, edition.id);
  const lines: string[] = [csvLine(['date', ...series.map((s) => s.name)])];
  for (let t = 0; t < dates.length; t++) {
    let line = dates[t]!;
    for (const s of series) {
      const x = s.values[t]!;
      line += Number.isNaN(x) ? ',' : `,${String(x)}`;
    }
    lines.push(line);
  }
  const safe = lib.name.replace(/[^A-Za-z0-9._-]+/g, '-').replace(/^-|-$/g, '') || 'library';
  return { fileName: `${safe}-edition-${edition.number}.csv`, csv: `${lines.join('\n')}\n` };
}

// ───────────────────────── admin actions ─────────────────────────

export function publishLibrary(db: Db, user: User, id: number): LibraryDetail {
  const lib = readableLibrary(db, user, id);
  if (user.role !== 'admin') throw new KeelsonApiError('forbidden', 'Only admins share libraries');
  if (lib.visibility === 'shared') throw new KeelsonApiError('conflict', `Library ${lib.name} is already shared`);
  if (lib.archivedAt) throw new KeelsonApiError('conflict', `Library ${lib.name} is archived; restore it before sharing`);
  inTransaction(db, (tx) => {
    db.$client.prepare("update libraries set visibility = 'shared' where id = ?").run(lib.id);
    audit(tx, user.id, 'library.published', { libraryId: lib.id, name: lib.name, ownerId: lib.ownerId });
  });
  return getLibrary(db, user, id);
}

/**
 * Stops sharing a library: it becomes private to its owner again (no owner: admins only). Refused
 * (409, naming the counts) while anyone other than the owner has a run or a saved model spec on one
 * of its editions: unsharing would make their runs unreadable to them (runs are read through their
 * library), so the admin archives the library instead, or the others' runs and specs go first.
 * Runs of the owner stay readable to the owner; reviewers and desk users stop seeing them.
 */
export function unpublishLibrary(db: Db, user: User, id: number): LibraryDetail {
  const lib = readableLibrary(db, user, id);
  if (user.role !== 'admin') throw new KeelsonApiError('forbidden', 'Only admins stop sharing libraries');
  if (lib.visibility !== 'shared') throw new KeelsonApiError('conflict', `Library ${lib.name} is not shared`);
  inTransaction(db, (tx) => {
    const others = othersUsing(db, lib.id, lib.ownerId);
    if (others.runs + others.specs > 0) {
      const what = [others.runs ? `${others.runs} run${others.runs === 1 ? '' : 's'}` : '', others.specs ? `${others.specs} saved model spec${others.specs === 1 ? '' : 's'}` : '']
        .filter(Boolean)
        .join(' and ');
      throw new KeelsonApiError(
        'conflict',
        `Library ${lib.name} stays shared: ${what} of ${others.people} other ${others.people === 1 ? 'person' : 'people'} use${others.runs + others.specs === 1 ? 's' : ''} its editions, and unsharing would hide their work from them. Archive the library instead (it leaves the lists; runs on it stay readable).`,
      );
    }
    db.$client.prepare("update libraries set visibility = 'private' where id = ?").run(lib.id);
    audit(tx, user.id, 'library.unpublished', { libraryId: lib.id, name: lib.name, ownerId: lib.ownerId });
  });
  return getLibrary(db, user, id);
}

/** Runs and saved specs on a library's editions by anyone but `ownerId` (raw SQL, guarded like editionIsUsed). */
function othersUsing(db: Db, libraryId: number, ownerId: number | null): { runs: number; specs: number; people: number } {
  const c = db.$client;
  const has = (t: string) => c.prepare("select 1 from sqlite_master where type = 'table' and name = ?").get(t) !== undefined;
  const people = new Set<number>();
  const count = (table: string): number => {
    if (!has(table)) return 0;
    const rows = c
      .prepare(`select author_id as a, count(*) as n from ${table} where edition_id in (select id from library_editions where library_id = ?) and author_id is not ? group by author_id`)
      .all(libraryId, ownerId) as { a: number; n: number }[];
    for (const r of rows) people.add(r.a);
    return rows.reduce((s, r) => s + r.n, 0);
  };
  return { runs: count('runs'), specs: count('model_specs'), people: people.size };
}

export function setArchived(db: Db, user: User, id: number, archived: boolean): LibraryDetail {
  const lib = readableLibrary(db, user, id);
  if (!permissions(user, lib).archive) {
    throw new KeelsonApiError('forbidden', lib.visibility === 'shared' ? 'Only admins archive shared libraries' : 'Only the owner or an admin archives a private library');
  }
  if (archived === !!lib.archivedAt) throw new KeelsonApiError('conflict', `Library ${lib.name} is ${archived ? 'already archived' : 'not archived'}`);
  inTransaction(db, (tx) => {
    db.$client.prepare('update libraries set archived_at = ? where id = ?').run(archived ? new Date().toISOString() : null, lib.id);
    audit(tx, user.id, archived ? 'library.archived' : 'library.restored', { libraryId: lib.id, name: lib.name });
  });
  return getLibrary(db, user, id);
}

export function deleteEdition(db: Db, user: User, libraryId: number, n: number): void {
  const { lib, edition } = editionOf(db, user, libraryId, n);
  if (user.role !== 'admin') throw new KeelsonApiError('forbidden', 'Only admins delete editions');
  inTransaction(db, (tx) => {
    if (editionIsUsed(db, edition.id)) {
      throw new KeelsonApiError('conflict', `Edition ${n} of ${lib.name} is used by a run and stays; archive the library instead`);
    }
    const specs = editionSpecCount(db, edition.id);
    if (specs > 0) {
      throw new KeelsonApiError('conflict', `Edition ${n} of ${lib.name} is the edition of ${specs} saved model spec${specs === 1 ? '' : 's'}; point ${specs === 1 ? 'it' : 'them'} at another edition first`);
    }
    const left = (db.$client.prepare('select count(*) as n from library_editions where library_id = ?').get(lib.id) as { n: number }).n;
    if (left <= 1) throw new KeelsonApiError('conflict', `Edition ${n} is the only edition of ${lib.name}; archive the library instead`);
    db.$client.prepare('delete from library_series where edition_id = ?').run(edition.id);
    db.$client.prepare('delete from library_editions where id = ?').run(edition.id);
    audit(tx, user.id, 'library.edition_deleted', { libraryId: lib.id, name: lib.name, edition: n, editionId: edition.id });
  });
}

import { sql } from 'drizzle-orm';
import { blob, index, integer, real, sqliteTable, text, uniqueIndex } from 'drizzle-orm/sqlite-core';
import { users } from './auth';

const now = sql`(strftime('%Y-%m-%dT%H:%M:%fZ','now'))`;

/** A return library: a named, dated table of series, versioned as editions. */
export const libraries = sqliteTable(
  'libraries',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    name: text('name').notNull(),
    description: text('description').notNull().default(''),
    visibility: text('visibility', { enum: ['private', 'shared'] }).notNull(),
    ownerId: integer('owner_id').references(() => users.id),
    /** Highest edition number ever issued (numbers are never reused, even after a delete). */
    lastEditionNumber: integer('last_edition_number').notNull().default(0),
    archivedAt: text('archived_at'),
    createdAt: text('created_at').notNull().default(now),
  },
  (t) => [index('libraries_owner_idx').on(t.ownerId), index('libraries_visibility_idx').on(t.visibility)],
);

/** One edition of a library: its dates (JSON array, ascending) and metadata. Values live in library_series. */
export const libraryEditions = sqliteTable(
  'library_editions',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    libraryId: integer('library_id')
      .notNull()
      .references(() => libraries.id),
    number: integer('number').notNull(),
    frequency: text('frequency', { enum: ['monthly', 'daily'] }).notNull(),
    rowCount: integer('row_count').notNull(),
    firstDate: text('first_date').notNull(),
    lastDate: text('last_date').notNull(),
    /** JSON array of YYYY-MM or YYYY-MM-DD strings. */
    dates: text('dates').notNull(),
    sourceUnits: text('source_units', { enum: ['decimal', 'percent'] }).notNull(),
    fileName: text('file_name').notNull().default(''),
    createdBy: integer('created_by').references(() => users.id),
    createdAt: text('created_at').notNull().default(now),
  },
  (t) => [uniqueIndex('library_editions_number_idx').on(t.libraryId, t.number)],
);

/** One series of one edition: all its values as a little-endian Float64Array blob (NaN = missing), in decimals. */
export const librarySeries = sqliteTable(
  'library_series',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    editionId: integer('edition_id')
      .notNull()
      .references(() => libraryEditions.id, { onDelete: 'cascade' }),
    position: integer('position').notNull(),
    name: text('name').notNull(),
    kind: text('kind', { enum: ['asset', 'factor', 'rf'] }).notNull(),
    traded: integer('traded', { mode: 'boolean' }).notNull(),
    values: blob('values', { mode: 'buffer' }).notNull(),
    /** The same values as a JSON array text (null for missing), written on confirm so API read-back needs no number formatting. */
    valuesJson: text('values_json'),
    count: integer('count').notNull(),
    missing: integer('missing').notNull(),
    mean: real('mean'),
    sd: real('sd'),
    min: real('min'),
    max: real('max'),
  },
  (t) => [uniqueIndex('library_series_position_idx').on(t.editionId, t.position)],
);

/** A parsed CSV waiting for review; owned by the uploader, expires after a day. */
export const libraryUploads = sqliteTable(
  'library_uploads',
  {
    id: text('id').primaryKey(),
    ownerId: integer('owner_id')
      .notNull()
      .references(() => users.id),
    fileName: text('file_name').notNull(),
    frequency: text('frequency', { enum: ['monthly', 'daily'] }).notNull(),
    /** JSON array of column names (series only, without the date column). */
    columns: text('columns').notNull(),
    dates: text('dates').notNull(),
    /** Column-major T×N Float64Array blob in the file's own units (NaN = missing). */
    values: blob('values', { mode: 'buffer' }).notNull(),
    /** JSON of the preview (units, warnings, per-series stats) shown to the uploader. */
    preview: text('preview').notNull(),
    expiresAt: text('expires_at').notNull(),
    createdAt: text('created_at').notNull().default(now),
  },
  (t) => [index('library_uploads_owner_idx').on(t.ownerId), index('library_uploads_expires_idx').on(t.expiresAt)],
);

export type LibraryRow = typeof libraries.$inferSelect;
export type NewLibraryRow = typeof libraries.$inferInsert;
export type LibraryEditionRow = typeof libraryEditions.$inferSelect;
export type NewLibraryEditionRow = typeof libraryEditions.$inferInsert;
export type LibrarySeriesRow = typeof librarySeries.$inferSelect;
export type NewLibrarySeriesRow = typeof librarySeries.$inferInsert;
export type LibraryUploadRow = typeof libraryUploads.$inferSelect;
export type NewLibraryUploadRow = typeof libraryUploads.$inferInsert;

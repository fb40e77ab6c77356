/**
 * Model specs, runs and their review (issue 5).
 *
 * `edition_id` references library_editions (an edition used by a run or a saved spec is never
 * deleted); `library_id` is a plain copy of the edition's library. The run keeps a frozen copy of the
 * names it needs (library name, edition number) so it stays readable as it was.
 */
import { sql } from 'drizzle-orm';
import { index, integer, sqliteTable, text } from 'drizzle-orm/sqlite-core';
import { users } from './auth';
import { libraryEditions } from './libraries';

const now = sql`(strftime('%Y-%m-%dT%H:%M:%fZ','now'))`;

export const modelSpecs = sqliteTable(
  'model_specs',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    name: text('name').notNull(),
    authorId: integer('author_id')
      .notNull()
      .references(() => users.id),
    editionId: integer('edition_id')
      .notNull()
      .references(() => libraryEditions.id),
    libraryId: integer('library_id').notNull(),
    libraryName: text('library_name').notNull(),
    editionNumber: integer('edition_number').notNull(),
    /** The spec body (shared/specs.ts `modelSpecSchema`) as JSON text. */
    spec: text('spec').notNull(),
    copiedFromId: integer('copied_from_id'),
    /** Set when the spec is archived: hidden from the list unless asked for; its runs stay readable. */
    archivedAt: text('archived_at'),
    createdAt: text('created_at').notNull().default(now),
    updatedAt: text('updated_at').notNull().default(now),
  },
  (t) => [index('model_specs_author_idx').on(t.authorId)],
);

export const runs = sqliteTable(
  'runs',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    specId: integer('spec_id').references(() => modelSpecs.id),
    specName: text('spec_name'),
    editionId: integer('edition_id')
      .notNull()
      .references(() => libraryEditions.id),
    libraryId: integer('library_id').notNull(),
    libraryName: text('library_name').notNull(),
    editionNumber: integer('edition_number').notNull(),
    /** Frozen copy of the spec the run estimated (JSON text). */
    spec: text('spec').notNull(),
    keelsonVersion: text('keelson_version').notNull(),
    authorId: integer('author_id')
      .notNull()
      .references(() => users.id),
    status: text('status', { enum: ['queued', 'running', 'finished', 'failed', 'cancelled'] }).notNull(),
    /** Why a failed run failed, in words. */
    error: text('error'),
    /** estimateLedger's full output (JSON text) for a finished run. */
    result: text('result'),
    /**
     * N, K, T of the finished run's result, as columns (migration 0008 fills them from `result`):
     * run lists read them without parsing any result JSON. Written with `result` through
     * runShapeColumns() (server/services/runs.ts) so they never drift.
     */
    nAssets: integer('n_assets'),
    nFactors: integer('n_factors'),
    nPeriods: integer('n_periods'),
    /**
     * The bootstrap deep check (jobs.id, plain integer like the other cross-module references)
     * started with the run when its spec asks for bootstrap p-values; its result is merged into
     * `result` once, in the transaction that marks the job finished.
     */
    bootstrapJobId: integer('bootstrap_job_id'),
    createdAt: text('created_at').notNull().default(now),
    startedAt: text('started_at'),
    finishedAt: text('finished_at'),
  },
  (t) => [
    index('runs_author_idx').on(t.authorId),
    index('runs_spec_idx').on(t.specId),
    index('runs_library_idx').on(t.libraryId),
    index('runs_status_idx').on(t.status),
  ],
);

export const runComments = sqliteTable(
  'run_comments',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    runId: integer('run_id')
      .notNull()
      .references(() => runs.id),
    authorId: integer('author_id')
      .notNull()
      .references(() => users.id),
    text: text('text').notNull(),
    createdAt: text('created_at').notNull().default(now),
  },
  (t) => [index('run_comments_run_idx').on(t.runId)],
);

export const signoffRequests = sqliteTable(
  'signoff_requests',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    runId: integer('run_id')
      .notNull()
      .references(() => runs.id),
    reviewerId: integer('reviewer_id')
      .notNull()
      .references(() => users.id),
    requestedById: integer('requested_by_id')
      .notNull()
      .references(() => users.id),
    note: text('note'),
    /** Set when the named reviewer gave a sign-off on the run. */
    answeredAt: text('answered_at'),
    createdAt: text('created_at').notNull().default(now),
  },
  (t) => [index('signoff_requests_reviewer_idx').on(t.reviewerId), index('signoff_requests_run_idx').on(t.runId)],
);

export const signoffs = sqliteTable(
  'signoffs',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    runId: integer('run_id')
      .notNull()
      .references(() => runs.id),
    reviewerId: integer('reviewer_id')
      .notNull()
      .references(() => users.id),
    decision: text('decision', { enum: ['approved', 'changes-requested'] }).notNull(),
    note: text('note'),
    createdAt: text('created_at').notNull().default(now),
  },
  (t) => [index('signoffs_run_idx').on(t.runId)],
);

export type ModelSpecRow = typeof modelSpecs.$inferSelect;
export type NewModelSpecRow = typeof modelSpecs.$inferInsert;
export type RunRow = typeof runs.$inferSelect;
export type NewRunRow = typeof runs.$inferInsert;

/**
 * Deep-check jobs (issue 6): bootstrap, subset sweep and rolling window, run in worker threads.
 *
 * `run_id` references runs; the service checks the run exists and is readable. `result` and the final
 * `status` are written in one transaction, so a result is never half-written.
 */
import { sql } from 'drizzle-orm';
import { index, integer, sqliteTable, text } from 'drizzle-orm/sqlite-core';
import { users } from './auth';
import { runs } from './runs';

const now = sql`(strftime('%Y-%m-%dT%H:%M:%fZ','now'))`;

export const jobs = sqliteTable(
  'jobs',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    kind: text('kind', { enum: ['bootstrap', 'subset-sweep', 'rolling', 'holdout'] }).notNull(),
    runId: integer('run_id')
      .notNull()
      .references(() => runs.id),
    authorId: integer('author_id')
      .notNull()
      .references(() => users.id),
    /** The check's parameters (shared/jobs.ts), JSON text. */
    params: text('params').notNull(),
    status: text('status', { enum: ['queued', 'running', 'finished', 'failed', 'cancelled', 'interrupted'] }).notNull(),
    done: integer('done').notNull().default(0),
    total: integer('total').notNull().default(0),
    error: text('error'),
    /** The check's result (JSON text), written together with status 'finished'. */
    result: text('result'),
    /** How many times the job was started (restarts add one). */
    attempts: integer('attempts').notNull().default(0),
    createdAt: text('created_at').notNull().default(now),
    startedAt: text('started_at'),
    finishedAt: text('finished_at'),
  },
  (t) => [index('jobs_run_idx').on(t.runId), index('jobs_author_idx').on(t.authorId), index('jobs_status_idx').on(t.status)],
);

export type JobRow = typeof jobs.$inferSelect;
export type NewJobRow = typeof jobs.$inferInsert;

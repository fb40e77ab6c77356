/**
 * Migrations 0007 (foreign keys on model_specs.edition_id, runs.edition_id and jobs.run_id). SQLite
 * adds a foreign key only by rebuilding the table (create new, copy, drop, rename), so this test
 * (0008 adds the run shape columns N, K, T, filled from each stored result; tested below.) This test
 * builds a database at migration 0006 with rows in every affected table and in the tables that
 * reference them, opens it with `openDb` (which applies 0007) and checks that every row is still
 * there, byte for byte, and that the new keys are enforced.
 */
import Database from 'better-sqlite3';
import { drizzle } from 'drizzle-orm/better-sqlite3';
import { migrate } from 'drizzle-orm/better-sqlite3/migrator';
import { copyFileSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { openDb } from '../../server/db/client';

const DRIZZLE = join(import.meta.dirname, '..', '..', 'drizzle');
const TABLES = ['users', 'libraries', 'library_editions', 'library_series', 'model_specs', 'runs', 'run_comments', 'signoff_requests', 'signoffs', 'jobs'] as const;

let dir: string;
beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'keelson-migrate-'));
});
afterEach(() => rmSync(dir, { recursive: true, force: true }));

/** A database file migrated up to (and including) migration `lastIdx` only. */
function databaseAt(lastIdx: number): string {
  const folder = join(dir, 'migrations');
  mkdirSync(join(folder, 'meta'), { recursive: true });
  const journal = JSON.parse(readFileSync(join(DRIZZLE, 'meta', '_journal.json'), 'utf8')) as { entries: { idx: number; tag: string }[] };
  journal.entries = journal.entries.filter((e) => e.idx <= lastIdx);
  writeFileSync(join(folder, 'meta', '_journal.json'), JSON.stringify(journal));
  for (const f of readdirSync(DRIZZLE).filter((f) => f.endsWith('.sql'))) copyFileSync(join(DRIZZLE, f), join(folder, f));
  const file = join(dir, 'old.db');
  const sqlite = new Database(file);
  sqlite.pragma('foreign_keys = ON');
  migrate(drizzle(sqlite), { migrationsFolder: folder });
  sqlite.close();
  return file;
}

/** Rows of one run of the product before 0007: a library, two editions, a spec, runs with comments, sign-offs and jobs. */
function fillOldDatabase(file: string, opts: { orphanJob?: boolean } = {}): void {
  const c = new Database(file);
  c.pragma('foreign_keys = ON');
  c.exec(`
    insert into users (id, email, name, password_hash, role) values (1, 'a@x.test', 'A', 'h', 'admin'), (2, 'r@x.test', 'R', 'h', 'reviewer');
    insert into libraries (id, name, visibility, owner_id, last_edition_number) values (1, 'L', 'shared', 1, 2);
    insert into library_editions (id, library_id, number, frequency, row_count, first_date, last_date, dates, source_units)
      values (1, 1, 1, 'monthly', 2, '2020-01', '2020-02', '["2020-01","2020-02"]', 'decimal'),
             (2, 1, 2, 'monthly', 2, '2020-01', '2020-02', '["2020-01","2020-02"]', 'percent');
    insert into library_series (edition_id, position, name, kind, traded, "values", count, missing) values (1, 0, 'S', 'asset', 1, x'000000000000f03f000000000000f8ff', 1, 1);
    insert into model_specs (id, name, author_id, edition_id, library_id, library_name, edition_number, spec) values (1, 'M', 1, 2, 1, 'L', 2, '{"k":1}');
    insert into runs (id, spec_id, spec_name, edition_id, library_id, library_name, edition_number, spec, keelson_version, author_id, status, result, bootstrap_job_id)
      values (1, 1, 'M', 2, 1, 'L', 2, '{"k":1}', '0.1.0', 1, 'finished', '{"r":[1.5,null]}', 1),
             (2, null, null, 1, 1, 'L', 1, '{"k":2}', '0.1.0', 1, 'failed', null, null);
    insert into run_comments (run_id, author_id, text) values (1, 2, 'looks fine');
    insert into signoff_requests (run_id, reviewer_id, requested_by_id) values (1, 2, 1);
    insert into signoffs (run_id, reviewer_id, decision, note) values (1, 2, 'approved', 'ok');
    insert into jobs (id, kind, run_id, author_id, params, status, result) values (1, 'bootstrap', 1, 1, '{}', 'finished', '{"b":2}'), (2, 'rolling', 2, 1, '{}', 'queued', null);
  `);
  // Before 0007 nothing stopped a job naming a run that does not exist.
  if (opts.orphanJob) c.exec(`insert into jobs (id, kind, run_id, author_id, params, status) values (3, 'rolling', 99, 1, '{}', 'queued')`);
  c.close();
}

/** Columns added after 0007 (0008's run shape), left out where a 0007 test compares rows with an older dump. */
const LATER_COLUMNS = ['n_assets', 'n_factors', 'n_periods'];

function dump(c: Database.Database): Record<string, unknown[]> {
  return Object.fromEntries(
    TABLES.map((t) => [t, (c.prepare(`select * from ${t} order by rowid`).all() as Record<string, unknown>[]).map((r) => Object.fromEntries(Object.entries(r).filter(([k]) => !LATER_COLUMNS.includes(k))))]),
  );
}

describe('migration 0007 foreign-keys', () => {
  it('keeps every row of a database with data and then enforces the new keys', () => {
    const file = databaseAt(6);
    fillOldDatabase(file);
    const before = (() => {
      const c = new Database(file, { readonly: true });
      const d = dump(c);
      c.close();
      return d;
    })();
    expect(before.runs).toHaveLength(2);
    expect(before.jobs).toHaveLength(2);

    const db = openDb(file);
    try {
      const c = db.$client;
      expect(dump(c)).toEqual(before);
      expect(c.pragma('foreign_keys', { simple: true })).toBe(1);
      const fk = (t: string) => (c.prepare(`select "from" as col, "table" as parent from pragma_foreign_key_list('${t}')`).all() as { col: string; parent: string }[]).map((r) => `${r.col}->${r.parent}`).sort();
      expect(fk('runs')).toEqual(['author_id->users', 'edition_id->library_editions', 'spec_id->model_specs']);
      expect(fk('model_specs')).toEqual(['author_id->users', 'edition_id->library_editions']);
      expect(fk('jobs')).toEqual(['author_id->users', 'run_id->runs']);
      // Children of the rebuilt tables still point at them (run_comments → runs after the rename).
      expect(fk('run_comments')).toContain('run_id->runs');
      expect(c.pragma('foreign_key_check')).toEqual([]);
      expect(c.pragma('integrity_check', { simple: true })).toBe('ok');
      // Indexes came back with the tables.
      const idx = (c.prepare("select name from sqlite_master where type = 'index' and tbl_name in ('runs', 'jobs', 'model_specs') and name not like 'sqlite_%' order by name").all() as { name: string }[]).map((r) => r.name);
      expect(idx).toEqual(['jobs_author_idx', 'jobs_run_idx', 'jobs_status_idx', 'model_specs_author_idx', 'runs_author_idx', 'runs_library_idx', 'runs_spec_idx', 'runs_status_idx']);

      expect(() => c.prepare("insert into jobs (kind, run_id, author_id, params, status) values ('rolling', 99, 1, '{}', 'queued')").run()).toThrow(/FOREIGN KEY/);
      expect(() =>
        c.prepare("insert into runs (edition_id, library_id, library_name, edition_number, spec, keelson_version, author_id, status) values (99, 1, 'L', 1, '{}', 'v', 1, 'queued')").run(),
      ).toThrow(/FOREIGN KEY/);
      expect(() => c.prepare("insert into model_specs (name, author_id, edition_id, library_id, library_name, edition_number, spec) values ('x', 1, 99, 1, 'L', 1, '{}')").run()).toThrow(/FOREIGN KEY/);
      expect(() => c.prepare('delete from library_editions where id = 2').run()).toThrow(/FOREIGN KEY/);
      // New ids continue after the copied ones (AUTOINCREMENT sequence carried over by the copy).
      const id = c.prepare("insert into jobs (kind, run_id, author_id, params, status) values ('rolling', 1, 1, '{}', 'queued')").run().lastInsertRowid;
      expect(Number(id)).toBe(3);
    } finally {
      db.$client.close();
    }
    // Opening again applies nothing and keeps the rows.
    const again = openDb(file);
    expect(dump(again.$client).runs).toEqual(before.runs);
    again.$client.close();
  });

  it('refuses to open a database whose rows break the new keys, naming the table', () => {
    const file = databaseAt(6);
    fillOldDatabase(file, { orphanJob: true });
    expect(() => openDb(file)).toThrow(/1 row\(s\) point at rows that do not exist \(first: jobs row 3 → runs\)/);
  });

  it('migrates an empty database from scratch', () => {
    const db = openDb(join(dir, 'new.db'));
    expect(db.$client.pragma('foreign_keys', { simple: true })).toBe(1);
    expect(db.$client.pragma('foreign_key_check')).toEqual([]);
    db.$client.close();
  });
});

describe('migration 0008 run-shape', () => {
  it('fills N, K, T of every run written before it from the stored result; runs without one stay null', () => {
    const file = databaseAt(7);
    fillOldDatabase(file);
    const c0 = new Database(file);
    // a finished run whose stored ledger has the shape fields estimateLedger writes
    c0.prepare(
      "insert into runs (id, edition_id, library_id, library_name, edition_number, spec, keelson_version, author_id, status, result) values (3, 2, 1, 'L', 2, '{}', '0.1.0', 1, 'finished', ?)",
    ).run(JSON.stringify({ N: 12, K: 3, T: 240, factors: [] }));
    c0.close();
    const db = openDb(file);
    try {
      const rows = db.$client.prepare('select id, n_assets as N, n_factors as K, n_periods as T from runs order by id').all();
      expect(rows).toEqual([
        { id: 1, N: null, K: null, T: null }, // its stored result has no shape fields
        { id: 2, N: null, K: null, T: null }, // failed: no result
        { id: 3, N: 12, K: 3, T: 240 },
      ]);
    } finally {
      db.$client.close();
    }
  });
});

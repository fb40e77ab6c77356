import Database from 'better-sqlite3';
import { drizzle, type BetterSQLite3Database } from 'drizzle-orm/better-sqlite3';
import { migrate } from 'drizzle-orm/better-sqlite3/migrator';
import { mkdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import * as schema from './schema/index';

/**
 * The Drizzle database. `$client` is the better-sqlite3 handle, for openDb's pragmas and for closing
 * the connection; queries go through Drizzle (a raw statement needs a benchmark, issue 12).
 */
export type Db = BetterSQLite3Database<typeof schema> & { $client: Database.Database };

const migrationsFolder = join(dirname(fileURLToPath(import.meta.url)), '..', '..', 'drizzle');

/** How long a connection waits for another process's write lock before giving up (ms). */
export const BUSY_TIMEOUT_MS = 5000;

/**
 * Opens (and migrates) the SQLite database. `':memory:'` gives a private in-memory database for tests.
 * File databases use WAL; foreign keys are on once migrated. Several server processes may share one file:
 * each waits up to BUSY_TIMEOUT_MS for the others' write locks (see `inTransaction`).
 */
export function openDb(path: string): Db {
  if (path !== ':memory:') mkdirSync(dirname(path), { recursive: true });
  const sqlite = new Database(path, { timeout: BUSY_TIMEOUT_MS });
  if (path !== ':memory:') sqlite.pragma('journal_mode = WAL');
  sqlite.pragma(`busy_timeout = ${BUSY_TIMEOUT_MS}`);
  const db = drizzle(sqlite, { schema }) as Db;
  // Migrations that rebuild a table (SQLite's way to add a foreign key: copy into a new table, drop,
  // rename) must run with foreign keys off: the migrator wraps them in one transaction, where the
  // migration's own `PRAGMA foreign_keys=OFF` is a no-op, and dropping a parent table with foreign
  // keys on fails. The rebuilt tables are then checked, and foreign keys are on from here.
  sqlite.pragma('foreign_keys = OFF');
  migrate(db, { migrationsFolder });
  const broken = sqlite.pragma('foreign_key_check') as { table: string; rowid: number; parent: string }[];
  if (broken.length > 0) {
    const first = broken[0]!;
    sqlite.close();
    throw new Error(
      `Database ${path}: ${broken.length} row(s) point at rows that do not exist (first: ${first.table} row ${first.rowid} → ${first.parent}); fix them before starting Keelson`,
    );
  }
  sqlite.pragma('foreign_keys = ON');
  return db;
}

/**
 * Runs `fn` inside one SQLite transaction (better-sqlite3 transactions are synchronous). Every write
 * transaction of the server goes through here. It begins IMMEDIATE, taking the write lock first:
 * a DEFERRED transaction that reads and then writes while another process commits fails at once
 * with SQLITE_BUSY (its snapshot is stale; the busy timeout cannot help), whereas BEGIN IMMEDIATE
 * waits up to the busy timeout for the other writer and then sees its data. Nested calls become
 * savepoints of the outer transaction.
 */
export function inTransaction<T>(db: Db, fn: (tx: Db) => T): T {
  return db.transaction((tx) => fn(tx as unknown as Db), { behavior: 'immediate' });
}

export { schema };

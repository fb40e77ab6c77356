/**
 * Two processes on one database file (item 13): while another process holds the write lock, a
 * write transaction of the server waits (busy timeout + BEGIN IMMEDIATE) instead of failing with
 * SQLITE_BUSY and a 500. The other process is a real child process with its own better-sqlite3
 * connection.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { eq, sql } from 'drizzle-orm';
import { agentAs, type Agent } from './helpers';
import { inTransaction, openDb, type Db } from '../../server/db/client';
import { createApp, type KeelsonApp } from '../../server/app';
import { createMailer, type Mailer } from '../../server/services/mailer';
import { seedDemoUsers } from '../../server/seed/users';
import { auditLog, users } from '../../server/db/schema/index';

const betterSqlite = createRequire(import.meta.url).resolve('better-sqlite3');

/** Starts a process that takes the write lock, writes one audit row, holds the lock `holdMs`, then commits. */
function holdWriteLock(file: string, holdMs: number): { child: ChildProcess; locked: Promise<void>; done: Promise<number | null> } {
  const code = `
    const Database = require(${JSON.stringify(betterSqlite)});
    const db = new Database(${JSON.stringify(file)});
    db.pragma('busy_timeout = 5000');
    db.exec('BEGIN IMMEDIATE');
    db.prepare("insert into audit_log (action, detail) values ('other.process', 'held the lock')").run();
    process.stdout.write('locked\\n');
    Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ${holdMs});
    db.exec('COMMIT');
    db.close();
  `;
  const child = spawn(process.execPath, ['-e', code], { stdio: ['ignore', 'pipe', 'inherit'] });
  const locked = new Promise<void>((resolve, reject) => {
    child.stdout!.on('data', (d: Buffer) => {
      if (d.toString().includes('locked')) resolve();
    });
    child.once('exit', (c) => reject(new Error(`lock holder exited early (${c})`)));
  });
  const done = new Promise<number | null>((resolve) => child.once('exit', (c) => resolve(c)));
  return { child, locked, done };
}

let dir: string;
let file: string;
let db: Db;
let mailer: Mailer;
let app: KeelsonApp;
let admin: Agent;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'keelson-two-procs-'));
  file = join(dir, 'shared.db');
  db = openDb(file);
  await seedDemoUsers(db);
  mailer = await createMailer();
  app = createApp({ db, mailer, sessionSecret: 'two-processes-secret' });
  admin = await agentAs(app, 'admin');
});
afterAll(async () => {
  app.close();
  await mailer.close();
  db.$client.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('two processes writing to one SQLite file', () => {
  it('an API write (read, then write in one transaction) waits for the other process instead of a 500', async () => {
    const desk = db.select().from(users).where(eq(users.email, 'desk@keelson.test')).get()!;
    const other = holdWriteLock(file, 600);
    await other.locked;
    const t0 = Date.now();
    const r = await admin.patch(`/api/v1/admin/users/${desk.id}`).set('x-csrf-token', admin.csrf).send({ role: 'reviewer' });
    const waited = Date.now() - t0;
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    expect(r.body.user.role).toBe('reviewer');
    expect(await other.done).toBe(0);
    expect(waited).toBeGreaterThan(200); // it really waited for the lock
    // Both writes are there.
    expect(db.select().from(auditLog).where(eq(auditLog.action, 'other.process')).all()).toHaveLength(1);
    expect(db.select().from(auditLog).where(eq(auditLog.action, 'user.update')).all()).toHaveLength(1);
  });

  it('inTransaction reads the other process’s committed row once it has the lock', async () => {
    const other = holdWriteLock(file, 400);
    await other.locked;
    const seen = inTransaction(db, (tx) => {
      const n = tx.select({ n: sql<number>`count(*)` }).from(auditLog).where(eq(auditLog.action, 'other.process')).get()!.n;
      tx.insert(auditLog).values({ action: 'this.process', detail: `saw ${n}` }).run();
      return n;
    });
    expect(seen).toBe(2);
    expect(await other.done).toBe(0);
  });

  it('sets the busy timeout on every connection', () => {
    expect(db.$client.pragma('busy_timeout', { simple: true })).toBe(5000);
    expect(db.$client.pragma('journal_mode', { simple: true })).toBe('wal');
  });
});

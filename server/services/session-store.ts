import session from 'express-session';
import { and, eq, lt, ne, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { sessions } from '../db/schema/index';

const DAY_MS = 24 * 60 * 60 * 1000;

/**
 * Ends every stored session signed in as `userId` (passport keeps the id at `passport.user`),
 * except `keepSid`. Returns how many were ended.
 */
export function destroyUserSessions(db: Db, userId: number, keepSid?: string): number {
  const ofUser = sql`json_extract(${sessions.data}, '$.passport.user') = ${userId}`;
  return db
    .delete(sessions)
    .where(keepSid ? and(ofUser, ne(sessions.sid, keepSid)) : ofUser)
    .run().changes;
}

/**
 * express-session store on Keelson's own `sessions` table. Expired rows are ignored on read
 * and swept on a timer that never keeps the process alive.
 */
export class SqliteSessionStore extends session.Store {
  private readonly timer: ReturnType<typeof setInterval>;

  constructor(
    private readonly db: Db,
    private readonly defaultTtlMs = DAY_MS,
    private readonly now: () => number = Date.now,
  ) {
    super();
    this.timer = setInterval(() => this.sweep(), 15 * 60 * 1000);
    // Never keep the process alive for the sweep (Node timers have unref; the DOM typing does not say so).
    (this.timer as unknown as { unref?: () => void }).unref?.();
  }

  private expiry(sess: session.SessionData): number {
    const exp = sess.cookie?.expires;
    if (exp) return new Date(exp).getTime();
    return this.now() + this.defaultTtlMs;
  }

  sweep(): number {
    return this.db.delete(sessions).where(lt(sessions.expiresAt, this.now())).run().changes;
  }

  override get(sid: string, cb: (err: unknown, session?: session.SessionData | null) => void): void {
    try {
      const row = this.db.select().from(sessions).where(eq(sessions.sid, sid)).get();
      if (!row || row.expiresAt <= this.now()) return cb(null, null);
      cb(null, JSON.parse(row.data) as session.SessionData);
    } catch (e) {
      cb(e);
    }
  }

  override set(sid: string, sess: session.SessionData, cb?: (err?: unknown) => void): void {
    try {
      const data = JSON.stringify(sess);
      const expiresAt = this.expiry(sess);
      this.db
        .insert(sessions)
        .values({ sid, data, expiresAt })
        .onConflictDoUpdate({ target: sessions.sid, set: { data, expiresAt } })
        .run();
      cb?.();
    } catch (e) {
      cb?.(e);
    }
  }

  override destroy(sid: string, cb?: (err?: unknown) => void): void {
    try {
      this.db.delete(sessions).where(eq(sessions.sid, sid)).run();
      cb?.();
    } catch (e) {
      cb?.(e);
    }
  }

  override touch(sid: string, sess: session.SessionData, cb?: (err?: unknown) => void): void {
    try {
      this.db.update(sessions).set({ expiresAt: this.expiry(sess) }).where(eq(sessions.sid, sid)).run();
      cb?.();
    } catch (e) {
      cb?.(e);
    }
  }

  close(): void {
    clearInterval(this.timer);
  }
}

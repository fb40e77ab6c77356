import session from 'express-session';
import { and, eq, lt, ne, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { sessions } from '../db/schema/index';
import { preparedFor } from '../db/prepared';

const DAY_MS = 24 * 60 * 60 * 1000;
/** A session's expiry is written at most once in this long by `touch` (rolling sessions touch on every request). */
export const SESSION_TOUCH_MS = 60_000;

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
const sessionBySid = preparedFor((db) => db.select().from(sessions).where(eq(sessions.sid, sql.placeholder('sid'))).prepare());
const touchSession = preparedFor((db) =>
  db
    .update(sessions)
    .set({ expiresAt: sql`${sql.placeholder('expiresAt')}` })
    .where(eq(sessions.sid, sql.placeholder('sid')))
    .prepare(),
);

export class SqliteSessionStore extends session.Store {
  private readonly timer: ReturnType<typeof setInterval>;
  /** When this process last wrote each session's expiry (touch or set). */
  private readonly touched = new Map<string, number>();

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
      const row = sessionBySid(this.db).get({ sid });
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
      this.remember(sid);
      cb?.();
    } catch (e) {
      cb?.(e);
    }
  }

  private remember(sid: string): void {
    if (this.touched.size > 50_000) this.touched.clear();
    this.touched.set(sid, this.now());
  }

  override destroy(sid: string, cb?: (err?: unknown) => void): void {
    this.touched.delete(sid);
    try {
      this.db.delete(sessions).where(eq(sessions.sid, sid)).run();
      cb?.();
    } catch (e) {
      cb?.(e);
    }
  }

  /**
   * Rolling expiry without a write per request: the row's expiry moves at most once a minute
   * (SESSION_TOUCH_MS), so a session lives at most a minute less than its cookie says.
   */
  override touch(sid: string, sess: session.SessionData, cb?: (err?: unknown) => void): void {
    const last = this.touched.get(sid);
    if (last !== undefined && this.now() - last < SESSION_TOUCH_MS) return cb?.();
    try {
      touchSession(this.db).run({ sid, expiresAt: this.expiry(sess) });
      this.remember(sid);
      cb?.();
    } catch (e) {
      cb?.(e);
    }
  }

  close(): void {
    clearInterval(this.timer);
  }
}

import type { Request, RequestHandler, Response } from 'express';
import { ipKeyGenerator, rateLimit, type ClientRateLimitInfo, type Options, type Store } from 'express-rate-limit';
import { eq, lt, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { rateLimits } from '../db/schema/index';
import { KeelsonApiError } from '../../shared/errors';
import { normaliseEmail } from '../../shared/auth';

export const LIMIT_WINDOW_MS = 15 * 60 * 1000;

/**
 * express-rate-limit store on the `rate_limits` table, so the counts survive a restart and are shared
 * by every server process on the same database file. Each increment is one atomic upsert.
 */
export class SqliteRateLimitStore implements Store {
  readonly localKeys = false;
  private windowMs = LIMIT_WINDOW_MS;
  private readonly timer: ReturnType<typeof setInterval>;

  constructor(
    private readonly db: Db,
    /** Prepended to every key, so two limiters never share a counter. */
    readonly prefix: string,
    private readonly now: () => number = Date.now,
  ) {
    this.timer = setInterval(() => this.sweep(), LIMIT_WINDOW_MS);
    (this.timer as unknown as { unref?: () => void }).unref?.();
  }

  init(options: Options): void {
    this.windowMs = options.windowMs;
    this.sweep();
  }

  /** Deletes counters whose window ended. */
  sweep(): number {
    return this.db.delete(rateLimits).where(lt(rateLimits.resetAt, this.now())).run().changes;
  }

  get(key: string): ClientRateLimitInfo | undefined {
    const row = this.db.select().from(rateLimits).where(eq(rateLimits.key, this.prefix + key)).get();
    if (!row || row.resetAt <= this.now()) return undefined;
    return { totalHits: row.hits, resetTime: new Date(row.resetAt) };
  }

  increment(key: string): ClientRateLimitInfo {
    const now = this.now();
    const fresh = now + this.windowMs;
    const row = this.db
      .insert(rateLimits)
      .values({ key: this.prefix + key, hits: 1, resetAt: fresh })
      .onConflictDoUpdate({
        target: rateLimits.key,
        set: {
          hits: sql`case when ${rateLimits.resetAt} <= ${now} then 1 else ${rateLimits.hits} + 1 end`,
          resetAt: sql`case when ${rateLimits.resetAt} <= ${now} then ${fresh} else ${rateLimits.resetAt} end`,
        },
      })
      .returning()
      .get();
    return { totalHits: row.hits, resetTime: new Date(row.resetAt) };
  }

  decrement(key: string): void {
    this.db
      .update(rateLimits)
      .set({ hits: sql`max(${rateLimits.hits} - 1, 0)` })
      .where(eq(rateLimits.key, this.prefix + key))
      .run();
  }

  resetKey(key: string): void {
    this.db.delete(rateLimits).where(eq(rateLimits.key, this.prefix + key)).run();
  }

  shutdown(): void {
    clearInterval(this.timer);
  }
}

export interface GuessLimiterOptions {
  db: Db;
  /** Store prefix, e.g. `login-email:`. */
  prefix: string;
  /** Failed attempts allowed per key in 15 minutes. */
  limit: number;
  /** The counter this request belongs to; the default is the client's IP (IPv6 by /56 subnet). */
  key?: (req: Request) => string;
  /** Which answers count as a failed guess; the default counts every answer of 400 or more. */
  failed?: (res: Response) => boolean;
  message: string;
}

/** A limiter that counts failed attempts only (a success gives its hit back) and answers 429 in the envelope. */
export function guessLimiter(o: GuessLimiterOptions): RequestHandler & { store: SqliteRateLimitStore } {
  const store = new SqliteRateLimitStore(o.db, o.prefix);
  const failed = o.failed ?? ((res: Response) => res.statusCode >= 400);
  const handler = rateLimit({
    windowMs: LIMIT_WINDOW_MS,
    limit: o.limit,
    standardHeaders: 'draft-7',
    legacyHeaders: false,
    skipSuccessfulRequests: true,
    requestWasSuccessful: (_req, res) => !failed(res),
    store,
    keyGenerator: o.key ?? ((req) => ipKeyGenerator(req.ip ?? '')),
    handler: (_req, _res, next) => next(new KeelsonApiError('rate_limited', o.message)),
  });
  return Object.assign(handler, { store });
}

/** The e-mail a sign-in request names, normalised exactly as sign-in itself reads it. */
export function signInEmailKey(req: Request): string {
  const email = (req.body as { email?: unknown } | undefined)?.email;
  return typeof email === 'string' ? normaliseEmail(email) : '';
}

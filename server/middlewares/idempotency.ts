import type { NextFunction, Request, RequestHandler, Response } from 'express';
import { createHash } from 'node:crypto';
import { and, eq, lt } from 'drizzle-orm';
import type { Db } from '../db/client';
import { idempotencyKeys } from '../db/schema/index';
import { KeelsonApiError } from '../../shared/errors';

/** How long a key and its first response are kept. */
export const IDEMPOTENCY_TTL_MS = 24 * 3600 * 1000;
/** A first request still unanswered after this long is taken as lost (its process died); the key may be used again. */
export const IDEMPOTENCY_STALE_MS = 10 * 60 * 1000;
export const IDEMPOTENCY_HEADER = 'idempotency-key';
const KEY_SHAPE = /^[\x21-\x7e]{1,200}$/;

/**
 * Paths (under /api/v1) that never keep a response: sign-in, sign-out, password change and
 * invitation acceptance carry passwords, and storing even a hash of such a body would be a
 * password hash outside the users table. They are retried safely as they are.
 */
const EXCLUDED = [/^\/auth\//, /^\/invitations\//];

/** JSON with object keys sorted, so `{a,b}` and `{b,a}` are the same request. */
export function canonicalJson(v: unknown): string {
  if (Array.isArray(v)) return `[${v.map(canonicalJson).join(',')}]`;
  if (v && typeof v === 'object') {
    const o = v as Record<string, unknown>;
    return `{${Object.keys(o)
      .sort()
      .filter((k) => o[k] !== undefined)
      .map((k) => `${JSON.stringify(k)}:${canonicalJson(o[k])}`)
      .join(',')}}`;
  }
  return JSON.stringify(v) ?? 'null';
}

function requestHash(req: Request): string {
  return createHash('sha256')
    .update(`${req.method} ${req.path}\n`)
    .update(req.body === undefined ? '' : canonicalJson(req.body))
    .digest('hex');
}

/**
 * `Idempotency-Key` on POST: the same signed-in user sending the same key with the same request
 * (method, path, canonical JSON body) gets the first response again — status and body — with
 * `Idempotent-Replayed: true`, and the route does not run again. The same key with a different
 * request is a 422. Only successful (2xx) first responses are kept; after a refusal or an error the
 * key is free again, so a corrected request can use it. Keys are kept 24 hours, per user.
 *
 * Multipart uploads are not replayed (the file is not read here): a repeated upload only makes a
 * second pending review, which expires in a day; the step that creates the library — confirm —
 * is JSON and is replayed. Requests without a signed-in user are not replayed either.
 */
export function idempotency(db: Db, now: () => number = Date.now): RequestHandler {
  return (req: Request, res: Response, next: NextFunction) => {
    const key = req.get(IDEMPOTENCY_HEADER);
    if (req.method !== 'POST' || key === undefined || !req.user) return next();
    if (EXCLUDED.some((re) => re.test(req.path)) || req.is('multipart/form-data')) return next();
    if (!KEY_SHAPE.test(key)) {
      return next(new KeelsonApiError('bad_request', 'The Idempotency-Key header must be 1 to 200 visible ASCII characters, such as a UUID'));
    }
    const userId = req.user.id;
    const hash = requestHash(req);
    const t = now();
    const where = and(eq(idempotencyKeys.userId, userId), eq(idempotencyKeys.key, key));

    db.delete(idempotencyKeys).where(lt(idempotencyKeys.createdAt, t - IDEMPOTENCY_TTL_MS)).run();
    const claimed = db
      .insert(idempotencyKeys)
      .values({ userId, key, requestHash: hash, status: null, createdAt: t })
      .onConflictDoNothing()
      .run().changes === 1;

    if (!claimed) {
      const row = db.select().from(idempotencyKeys).where(where).get();
      if (row && row.requestHash !== hash) {
        return next(
          new KeelsonApiError(
            'unprocessable',
            'This Idempotency-Key was already used for a different request (another route or body); use a new key for a new request',
          ),
        );
      }
      if (row && row.status !== null) {
        res.status(row.status).set('Idempotent-Replayed', 'true');
        if (row.contentType) res.type(row.contentType);
        return res.send(row.body ?? '');
      }
      if (row && row.createdAt > t - IDEMPOTENCY_STALE_MS) {
        return next(new KeelsonApiError('conflict', 'The first request with this Idempotency-Key is still running; wait for it, then retry'));
      }
      // The first request was lost (its process stopped): take the key over.
      db.update(idempotencyKeys).set({ requestHash: hash, status: null, createdAt: t }).where(where).run();
    }

    let settled = false;
    const settle = (body: unknown) => {
      if (settled) return;
      settled = true;
      if (res.statusCode >= 200 && res.statusCode < 300) {
        const text = body === undefined ? '' : Buffer.isBuffer(body) ? body.toString('utf8') : String(body);
        const contentType = res.get('Content-Type') ?? null;
        db.update(idempotencyKeys).set({ status: res.statusCode, body: text, contentType }).where(where).run();
      } else {
        db.delete(idempotencyKeys).where(where).run();
      }
    };
    const send = res.send.bind(res);
    res.send = (body?: unknown) => {
      settle(body);
      return send(body);
    };
    const end = res.end.bind(res) as (...a: unknown[]) => Response;
    res.end = ((...args: unknown[]) => {
      settle(typeof args[0] === 'function' ? undefined : args[0]);
      return end(...args);
    }) as Response['end'];
    // A response that never went through send/end (socket closed early): free the key.
    res.on('close', () => {
      if (!settled) {
        settled = true;
        db.delete(idempotencyKeys).where(where).run();
      }
    });
    next();
  };
}

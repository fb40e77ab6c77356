import { sql } from 'drizzle-orm';
import { index, integer, primaryKey, sqliteTable, text } from 'drizzle-orm/sqlite-core';

const now = sql`(strftime('%Y-%m-%dT%H:%M:%fZ','now'))`;

export const users = sqliteTable('users', {
  id: integer('id').primaryKey({ autoIncrement: true }),
  email: text('email').notNull().unique(),
  name: text('name').notNull(),
  passwordHash: text('password_hash').notNull(),
  role: text('role', { enum: ['admin', 'researcher', 'reviewer', 'desk'] }).notNull(),
  active: integer('active', { mode: 'boolean' }).notNull().default(true),
  createdAt: text('created_at').notNull().default(now),
  lastLoginAt: text('last_login_at'),
});

/** express-session store rows (see server/services/session-store.ts). */
export const sessions = sqliteTable(
  'sessions',
  {
    sid: text('sid').primaryKey(),
    data: text('data').notNull(),
    expiresAt: integer('expires_at').notNull(),
  },
  (t) => [index('sessions_expires_idx').on(t.expiresAt)],
);

export const invitations = sqliteTable('invitations', {
  id: integer('id').primaryKey({ autoIncrement: true }),
  email: text('email').notNull(),
  name: text('name').notNull(),
  role: text('role', { enum: ['admin', 'researcher', 'reviewer', 'desk'] }).notNull(),
  tokenHash: text('token_hash').notNull().unique(),
  invitedBy: integer('invited_by').references(() => users.id),
  expiresAt: text('expires_at').notNull(),
  acceptedAt: text('accepted_at'),
  createdAt: text('created_at').notNull().default(now),
});

export const auditLog = sqliteTable(
  'audit_log',
  {
    id: integer('id').primaryKey({ autoIncrement: true }),
    userId: integer('user_id').references(() => users.id),
    action: text('action').notNull(),
    detail: text('detail'),
    createdAt: text('created_at').notNull().default(now),
  },
  (t) => [index('audit_created_idx').on(t.createdAt)],
);

/** Every message the mailer handed to SMTP and the server accepted. */
export const outbox = sqliteTable('outbox', {
  id: integer('id').primaryKey({ autoIncrement: true }),
  to: text('to_address').notNull(),
  subject: text('subject').notNull(),
  text: text('body_text').notNull(),
  messageId: text('message_id'),
  createdAt: text('created_at').notNull().default(now),
});

/**
 * Hit counters of the sign-in and password-change rate limiters (express-rate-limit store, see
 * server/middlewares/rate-limit.ts). Kept in SQLite so a restart does not forget them.
 */
export const rateLimits = sqliteTable(
  'rate_limits',
  {
    key: text('key').primaryKey(),
    hits: integer('hits').notNull(),
    /** Epoch milliseconds when the window of this key ends. */
    resetAt: integer('reset_at').notNull(),
  },
  (t) => [index('rate_limits_reset_idx').on(t.resetAt)],
);

/**
 * First responses of POST requests sent with an `Idempotency-Key` header (server/middlewares/idempotency.ts),
 * kept 24 hours. `status` is null while the first request is still running.
 */
export const idempotencyKeys = sqliteTable(
  'idempotency_keys',
  {
    userId: integer('user_id')
      .notNull()
      .references(() => users.id),
    key: text('key').notNull(),
    /** sha256 of method, path and the canonical JSON body. */
    requestHash: text('request_hash').notNull(),
    status: integer('status'),
    contentType: text('content_type'),
    body: text('body'),
    /** Epoch milliseconds. */
    createdAt: integer('created_at').notNull(),
  },
  (t) => [primaryKey({ columns: [t.userId, t.key] }), index('idempotency_created_idx').on(t.createdAt)],
);

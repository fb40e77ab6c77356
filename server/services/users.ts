import bcrypt from 'bcryptjs';
import { createHash, randomBytes } from 'node:crypto';
import { and, desc, eq, isNull, ne, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { inTransaction } from '../db/client';
import { invitations, users } from '../db/schema/index';
import { preparedFor } from '../db/prepared';
import { KeelsonApiError } from '../../shared/errors';
import { normaliseEmail, type AdminUser, type InviteBody, type Invitation, type User } from '../../shared/auth';
import type { Role } from '../../shared/roles';
import { audit } from './audit';
import { assertPasswordAllowed } from './password-policy';
import { destroyUserSessions } from './session-store';

const BCRYPT_ROUNDS = 10;
const INVITE_DAYS = 7;
// A hash to compare against when the e-mail is unknown, so both paths take the same time.
const DUMMY_HASH = bcrypt.hashSync('not-a-real-password', BCRYPT_ROUNDS);

type UserRow = typeof users.$inferSelect;

/** The display name of user `id` ("user 12" when the account is gone): the one lookup every service uses. */
export function nameOf(db: Db, id: number): string {
  return userNameById(db).get({ id })?.name ?? `user ${id}`;
}

export function toUser(row: UserRow): User {
  return { id: row.id, email: row.email, name: row.name, role: row.role };
}

function toAdminUser(row: UserRow): AdminUser {
  return { ...toUser(row), active: row.active, createdAt: row.createdAt, lastLoginAt: row.lastLoginAt };
}

export function hashPassword(password: string): Promise<string> {
  return bcrypt.hash(password, BCRYPT_ROUNDS);
}

/** Checks e-mail and password; returns the user or null. Inactive users cannot sign in. */
export async function verifyCredentials(db: Db, email: string, password: string): Promise<User | null> {
  const row = db.select().from(users).where(eq(users.email, normaliseEmail(email))).get();
  const ok = await bcrypt.compare(password, row?.passwordHash ?? DUMMY_HASH);
  if (!row || !ok || !row.active) return null;
  return toUser(row);
}

const activeUserById = preparedFor((db) =>
  db
    .select()
    .from(users)
    .where(and(eq(users.id, sql.placeholder('id')), eq(users.active, true)))
    .prepare(),
);
const userNameById = preparedFor((db) =>
  db
    .select({ name: users.name })
    .from(users)
    .where(eq(users.id, sql.placeholder('id')))
    .prepare(),
);

export function findActiveUser(db: Db, id: number): User | null {
  const row = activeUserById(db).get({ id });
  return row ? toUser(row) : null;
}

export function markLogin(db: Db, userId: number): void {
  db.update(users).set({ lastLoginAt: new Date().toISOString() }).where(eq(users.id, userId)).run();
  audit(db, userId, 'auth.login');
}

export function listUsers(db: Db): AdminUser[] {
  return db.select().from(users).orderBy(users.id).all().map(toAdminUser);
}

export async function createUser(db: Db, u: { email: string; name: string; role: Role; password: string }): Promise<User> {
  const passwordHash = await hashPassword(u.password);
  const row = db
    .insert(users)
    .values({ email: normaliseEmail(u.email), name: u.name, role: u.role, passwordHash })
    .returning()
    .get();
  return toUser(row);
}

function hashToken(token: string): string {
  return createHash('sha256').update(token).digest('hex');
}

function toInvitation(r: typeof invitations.$inferSelect): Invitation {
  return {
    id: r.id,
    email: r.email,
    name: r.name,
    role: r.role,
    expiresAt: r.expiresAt,
    acceptedAt: r.acceptedAt,
    createdAt: r.createdAt,
  };
}

/** Creates an invitation; returns it with the one-time token (only its hash is stored). */
export function createInvitation(db: Db, by: User, body: InviteBody, now = new Date()): { invitation: Invitation; token: string } {
  const existing = db.select({ id: users.id }).from(users).where(eq(users.email, body.email)).get();
  if (existing) throw new KeelsonApiError('conflict', `${body.email} already has a Keelson account`);
  const token = randomBytes(32).toString('hex');
  const expiresAt = new Date(now.getTime() + INVITE_DAYS * 24 * 3600 * 1000).toISOString();
  const row = inTransaction(db, (tx) => {
    const r = tx
      .insert(invitations)
      .values({ email: body.email, name: body.name, role: body.role, tokenHash: hashToken(token), invitedBy: by.id, expiresAt })
      .returning()
      .get();
    audit(tx, by.id, 'invitation.create', { email: body.email, role: body.role });
    return r;
  });
  return { invitation: toInvitation(row), token };
}

export function listInvitations(db: Db): Invitation[] {
  return db.select().from(invitations).orderBy(desc(invitations.id)).all().map(toInvitation);
}

function openInvitation(db: Db, token: string, now: Date) {
  const row = db.select().from(invitations).where(eq(invitations.tokenHash, hashToken(token))).get();
  if (!row) throw new KeelsonApiError('not_found', 'This invitation link is not valid; ask an admin for a new one');
  if (row.acceptedAt) throw new KeelsonApiError('conflict', 'This invitation was already used; sign in instead');
  if (new Date(row.expiresAt).getTime() <= now.getTime()) {
    throw new KeelsonApiError('conflict', `This invitation expired on ${row.expiresAt.slice(0, 10)}; ask an admin for a new one`);
  }
  return row;
}

export function previewInvitation(db: Db, token: string, now = new Date()) {
  const row = openInvitation(db, token, now);
  return { email: row.email, name: row.name, role: row.role, expiresAt: row.expiresAt };
}

/** Accepts an invitation: creates the user in one transaction and marks the invitation used. */
export async function acceptInvitation(db: Db, token: string, password: string, now = new Date()): Promise<User> {
  const invited = openInvitation(db, token, now);
  assertPasswordAllowed(password, 'password', [invited.email, invited.name]);
  const passwordHash = await hashPassword(password);
  return inTransaction(db, (tx) => {
    // Re-check inside the transaction: a second accept that raced the first must fail.
    const row = openInvitation(tx, token, now);
    const taken = tx.select({ id: users.id }).from(users).where(eq(users.email, row.email)).get();
    if (taken) throw new KeelsonApiError('conflict', `${row.email} already has a Keelson account`);
    const u = tx.insert(users).values({ email: row.email, name: row.name, role: row.role, passwordHash }).returning().get();
    const upd = tx
      .update(invitations)
      .set({ acceptedAt: now.toISOString() })
      .where(and(eq(invitations.id, row.id), isNull(invitations.acceptedAt)))
      .run();
    if (upd.changes !== 1) throw new KeelsonApiError('conflict', 'This invitation was already used; sign in instead');
    audit(tx, u.id, 'invitation.accept', { invitationId: row.id });
    return toUser(u);
  });
}

/**
 * Changes the signed-in user's password: 403 when the current one is wrong, 400 (naming
 * `newPassword`) when the new one is refused by the policy. In one transaction the hash is replaced,
 * every other session of the user is ended and an audit entry is written.
 */
export async function changePassword(db: Db, user: User, currentPassword: string, newPassword: string, keepSessionId?: string): Promise<{ endedSessions: number }> {
  const row = db.select().from(users).where(eq(users.id, user.id)).get();
  if (!row || !row.active) throw new KeelsonApiError('unauthenticated', 'Sign in first');
  if (!(await bcrypt.compare(currentPassword, row.passwordHash))) {
    throw new KeelsonApiError('forbidden', 'The current password is wrong; nothing was changed');
  }
  if (newPassword === currentPassword) {
    throw new KeelsonApiError('validation_failed', 'The new password is the same as the current one', [
      { path: ['newPassword'], message: 'Choose a password different from the current one' },
    ]);
  }
  assertPasswordAllowed(newPassword, 'newPassword', [row.email, row.name]);
  const passwordHash = await hashPassword(newPassword);
  return inTransaction(db, (tx) => {
    tx.update(users).set({ passwordHash }).where(eq(users.id, user.id)).run();
    const endedSessions = destroyUserSessions(tx, user.id, keepSessionId);
    audit(tx, user.id, 'auth.password_change', { endedSessions });
    return { endedSessions };
  });
}

/** Changes a user's role or active flag. An admin cannot demote or deactivate the last active admin. */
export function updateUser(db: Db, by: User, id: number, patch: { role?: Role; active?: boolean }): AdminUser {
  return inTransaction(db, (tx) => {
    const row = tx.select().from(users).where(eq(users.id, id)).get();
    if (!row) throw new KeelsonApiError('not_found', `No user with id ${id}`);
    const losesAdmin = row.role === 'admin' && row.active && ((patch.role && patch.role !== 'admin') || patch.active === false);
    if (losesAdmin) {
      const others = tx
        .select({ n: sql<number>`count(*)` })
        .from(users)
        .where(and(eq(users.role, 'admin'), eq(users.active, true), ne(users.id, id)))
        .get();
      if ((others?.n ?? 0) === 0) throw new KeelsonApiError('conflict', 'Keelson needs at least one active admin');
    }
    const updated = tx
      .update(users)
      .set({ ...(patch.role ? { role: patch.role } : {}), ...(patch.active !== undefined ? { active: patch.active } : {}) })
      .where(eq(users.id, id))
      .returning()
      .get();
    audit(tx, by.id, 'user.update', { userId: id, ...patch });
    return toAdminUser(updated);
  });
}

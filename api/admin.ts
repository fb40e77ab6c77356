/** Fetchers for the admin (Team) section. */
import {
  adminUserSchema,
  adminUsersResponseSchema,
  invitationSchema,
  invitationsResponseSchema,
  outboxResponseSchema,
  type InviteBody,
} from '../shared/auth';
import type { Role } from '../shared/roles';
import { z } from 'zod';
import { auditPageResponseSchema } from '../shared/audit';
import { apiRequest, newIdempotencyKey } from './client';

export type { AuditEntry, AuditPage } from '../shared/audit';

export async function listUsers() {
  return (await apiRequest('/admin/users', { schema: adminUsersResponseSchema })).users;
}

export async function updateUser(id: number, patch: { role?: Role; active?: boolean }) {
  return (await apiRequest(`/admin/users/${id}`, { method: 'PATCH', body: patch, schema: z.object({ user: adminUserSchema }) })).user;
}

export async function listInvitations() {
  return (await apiRequest('/admin/invitations', { schema: invitationsResponseSchema })).invitations;
}

export async function createInvitation(body: InviteBody, idempotencyKey = newIdempotencyKey()) {
  return (await apiRequest('/admin/invitations', { method: 'POST', body, schema: z.object({ invitation: invitationSchema }), idempotencyKey })).invitation;
}

export async function listOutbox() {
  return (await apiRequest('/admin/outbox', { schema: outboxResponseSchema })).messages;
}

/** One page of the audit log, newest first: entries older than `before` (an entry id), at most `limit`. */
export function listAudit(page: { before?: number; limit?: number } = {}) {
  const q = new URLSearchParams();
  if (page.before !== undefined) q.set('before', String(page.before));
  if (page.limit !== undefined) q.set('limit', String(page.limit));
  const qs = q.toString();
  return apiRequest(`/admin/audit${qs ? `?${qs}` : ''}`, { schema: auditPageResponseSchema });
}

/** Fetchers for the admin (Team) section. */
import {
  adminUserSchema,
  adminUsersResponseSchema,
  auditResponseSchema,
  invitationSchema,
  invitationsResponseSchema,
  outboxResponseSchema,
  type InviteBody,
} from '../shared/auth';
import type { Role } from '../shared/roles';
import { z } from 'zod';
import { apiRequest } from './client';

export type AuditEntry = z.infer<typeof auditResponseSchema>['entries'][number];

export async function listUsers() {
  return (await apiRequest('/admin/users', { schema: adminUsersResponseSchema })).users;
}

export async function updateUser(id: number, patch: { role?: Role; active?: boolean }) {
  return (await apiRequest(`/admin/users/${id}`, { method: 'PATCH', body: patch, schema: z.object({ user: adminUserSchema }) })).user;
}

export async function listInvitations() {
  return (await apiRequest('/admin/invitations', { schema: invitationsResponseSchema })).invitations;
}

export async function createInvitation(body: InviteBody) {
  return (await apiRequest('/admin/invitations', { method: 'POST', body, schema: z.object({ invitation: invitationSchema }) })).invitation;
}

export async function listOutbox() {
  return (await apiRequest('/admin/outbox', { schema: outboxResponseSchema })).messages;
}

export async function listAudit() {
  return (await apiRequest('/admin/audit', { schema: auditResponseSchema })).entries;
}

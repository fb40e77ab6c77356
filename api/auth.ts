/** Fetchers for sign-in, session and invitations (public side). */
import { type z } from 'zod';
import {
  healthResponseSchema,
  invitationPreviewSchema,
  meResponseSchema,
  outboxResponseSchema,
  userResponseSchema,
  type User,
} from '../shared/auth';
import { apiRequest, newIdempotencyKey, resetCsrfToken } from './client';

export type InvitationPreview = z.infer<typeof invitationPreviewSchema>['invitation'];

export function getHealth() {
  return apiRequest('/health', { schema: healthResponseSchema });
}

/** The signed-in user, or null when nobody is signed in (the server answers 200 `{ user: null }`). */
export async function getMe(): Promise<User | null> {
  return (await apiRequest('/auth/me', { schema: meResponseSchema })).user;
}

export async function login(email: string, password: string): Promise<User> {
  return (await apiRequest('/auth/login', { method: 'POST', body: { email, password }, schema: userResponseSchema })).user;
}

export async function logout(): Promise<void> {
  try {
    await apiRequest('/auth/logout', { method: 'POST' });
  } finally {
    resetCsrfToken();
  }
}

export async function getMyOutbox() {
  return (await apiRequest('/auth/outbox', { schema: outboxResponseSchema })).messages;
}

export async function getInvitation(token: string): Promise<InvitationPreview> {
  return (await apiRequest(`/invitations/${encodeURIComponent(token)}`, { schema: invitationPreviewSchema })).invitation;
}

export async function acceptInvitation(token: string, password: string, idempotencyKey = newIdempotencyKey()): Promise<User> {
  return (await apiRequest('/invitations/accept', { method: 'POST', body: { token, password }, schema: userResponseSchema, idempotencyKey })).user;
}

/** Body of `POST /auth/password` (204; 400 with `issues` naming the field; 403 when the current password is wrong). */
export interface PasswordChangeBody {
  currentPassword: string;
  newPassword: string;
}

export async function changePassword(body: PasswordChangeBody): Promise<void> {
  await apiRequest('/auth/password', { method: 'POST', body });
}

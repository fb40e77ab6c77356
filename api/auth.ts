/** Fetchers for sign-in, session and invitations (public side). */
import { type z } from 'zod';
import {
  healthResponseSchema,
  invitationPreviewSchema,
  meResponseSchema,
  outboxResponseSchema,
  signInResponseSchema,
  type ChangePasswordBody,
  type User,
} from '../shared/auth';
import { apiRequest, newIdempotencyKey, resetCsrfToken, setCsrfToken } from './client';

/**
 * Sign-in and accepting an invitation start a new session and the server rotates the CSRF token: the
 * new one comes back as `csrfToken` and the client uses it from now on (no refused first write).
 */
function signedIn(r: z.infer<typeof signInResponseSchema>): User {
  setCsrfToken(r.csrfToken);
  return r.user;
}

export type InvitationPreview = z.infer<typeof invitationPreviewSchema>['invitation'];

export function getHealth() {
  return apiRequest('/health', { schema: healthResponseSchema });
}

/** The signed-in user, or null when nobody is signed in (the server answers 200 `{ user: null }`). */
export async function getMe(): Promise<User | null> {
  return (await apiRequest('/auth/me', { schema: meResponseSchema })).user;
}

export async function login(email: string, password: string): Promise<User> {
  return signedIn(await apiRequest('/auth/login', { method: 'POST', body: { email, password }, schema: signInResponseSchema }));
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
  return signedIn(await apiRequest('/invitations/accept', { method: 'POST', body: { token, password }, schema: signInResponseSchema, idempotencyKey }));
}

/** `POST /auth/password`: 204; 400 with `issues` naming the field; 403 when the current password is wrong. */
export type PasswordChangeBody = ChangePasswordBody;

export async function changePassword(body: PasswordChangeBody): Promise<void> {
  await apiRequest('/auth/password', { method: 'POST', body });
}

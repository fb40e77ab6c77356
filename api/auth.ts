/** Fetchers for sign-in, session and invitations (public side). */
import { z } from 'zod';
import {
  healthResponseSchema,
  invitationPreviewSchema,
  meResponseSchema,
  outboxResponseSchema,
  userResponseSchema,
  type User,
} from '../shared/auth';
import { apiRequest, newIdempotencyKey, resetCsrfToken, setCsrfToken } from './client';

/**
 * Sign-in and accepting an invitation start a new session; a server that rotates the CSRF token then
 * sends the new one as `csrfToken`, which the client keeps (without it, the first write retries once).
 */
const signedInSchema = userResponseSchema.extend({ csrfToken: z.string().optional() });
function signedIn(r: z.infer<typeof signedInSchema>): User {
  if (r.csrfToken) setCsrfToken(r.csrfToken);
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
  return signedIn(await apiRequest('/auth/login', { method: 'POST', body: { email, password }, schema: signedInSchema }));
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
  return signedIn(await apiRequest('/invitations/accept', { method: 'POST', body: { token, password }, schema: signedInSchema, idempotencyKey }));
}

/** Body of `POST /auth/password` (204; 400 with `issues` naming the field; 403 when the current password is wrong). */
export interface PasswordChangeBody {
  currentPassword: string;
  newPassword: string;
}

export async function changePassword(body: PasswordChangeBody): Promise<void> {
  await apiRequest('/auth/password', { method: 'POST', body });
}

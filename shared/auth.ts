import { z } from 'zod';
import { roleSchema } from './roles';

export const userSchema = z.object({
  id: z.number().int(),
  email: z.string(),
  name: z.string(),
  role: roleSchema,
});
export type User = z.infer<typeof userSchema>;

/**
 * The one normalisation of an e-mail address (trim, lower-case): sign-in, the sign-in rate limiter,
 * invitations and account creation all go through it, so " Name@X " and "name@x" are one account.
 */
export function normaliseEmail(email: string): string {
  return email.trim().toLowerCase();
}

/** An e-mail field: normalised with `normaliseEmail`, then checked. */
export const emailSchema = z.string().overwrite(normaliseEmail).email('Enter an e-mail address such as name@example.org');

export const loginBodySchema = z.object({
  email: emailSchema,
  password: z.string().min(1, 'Enter your password'),
});
export type LoginBody = z.infer<typeof loginBodySchema>;

export const userResponseSchema = z.object({ user: userSchema });
/**
 * Answer to sign-in and invitation acceptance: the CSRF token is rotated when the session changes
 * hands, so the new one comes back here (send it as `x-csrf-token` from now on).
 */
export const signInResponseSchema = userResponseSchema.extend({ csrfToken: z.string() });
/** `GET /auth/me`: 200 for everyone; `user` is null when nobody is signed in (no 401 on every signed-out load). */
export const meResponseSchema = z.object({ user: userSchema.nullable() });
export const csrfResponseSchema = z.object({ token: z.string() });
export const healthResponseSchema = z.object({ status: z.literal('ok'), version: z.string() });

export const adminUserSchema = userSchema.extend({
  active: z.boolean(),
  createdAt: z.string(),
  lastLoginAt: z.string().nullable(),
});
export type AdminUser = z.infer<typeof adminUserSchema>;
export const adminUsersResponseSchema = z.object({ users: z.array(adminUserSchema) });

export const inviteBodySchema = z.object({
  email: emailSchema,
  name: z.string().trim().min(1, 'Enter a display name').max(120),
  role: roleSchema,
});
export type InviteBody = z.infer<typeof inviteBodySchema>;

export const invitationSchema = z.object({
  id: z.number().int(),
  email: z.string(),
  name: z.string(),
  role: roleSchema,
  expiresAt: z.string(),
  acceptedAt: z.string().nullable(),
  createdAt: z.string(),
});
export type Invitation = z.infer<typeof invitationSchema>;
export const invitationsResponseSchema = z.object({ invitations: z.array(invitationSchema) });

export const PASSWORD_MIN = 10;
export const PASSWORD_MAX = 200;
/**
 * The shape of a new password that needs no dictionary: length, and not one character repeated.
 * The server also refuses common and easily guessed passwords (server/services/password-policy.ts).
 */
export const newPasswordSchema = z
  .string()
  .min(PASSWORD_MIN, `Use at least ${PASSWORD_MIN} characters`)
  .max(PASSWORD_MAX, `Use at most ${PASSWORD_MAX} characters`)
  .refine((p) => !/^(.)\1*$/su.test(p), 'A password of one repeated character is too easy to guess; mix several characters or words');
export const acceptInviteBodySchema = z.object({
  token: z.string().min(16),
  password: newPasswordSchema,
});
/** `POST /auth/password`: 204 on success; other sessions of the user are signed out. */
export const changePasswordBodySchema = z.object({
  currentPassword: z.string().min(1, 'Enter your current password').max(PASSWORD_MAX),
  newPassword: newPasswordSchema,
});
export type ChangePasswordBody = z.infer<typeof changePasswordBodySchema>;
export const invitationPreviewSchema = z.object({
  invitation: z.object({ email: z.string(), name: z.string(), role: roleSchema, expiresAt: z.string() }),
});

export const updateUserBodySchema = z
  .object({ role: roleSchema.optional(), active: z.boolean().optional() })
  .refine((v) => v.role !== undefined || v.active !== undefined, 'Give a role or an active flag');

export const outboxMessageSchema = z.object({
  id: z.number().int(),
  to: z.string(),
  subject: z.string(),
  text: z.string(),
  createdAt: z.string(),
});
export type OutboxMessage = z.infer<typeof outboxMessageSchema>;
export const outboxResponseSchema = z.object({ messages: z.array(outboxMessageSchema) });

export const auditEntrySchema = z.object({
  id: z.number().int(),
  userId: z.number().int().nullable(),
  action: z.string(),
  detail: z.string().nullable(),
  createdAt: z.string(),
});
export const auditResponseSchema = z.object({ entries: z.array(auditEntrySchema) });

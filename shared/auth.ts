import { z } from 'zod';
import { roleSchema } from './roles';

export const userSchema = z.object({
  id: z.number().int(),
  email: z.string(),
  name: z.string(),
  role: roleSchema,
});
export type User = z.infer<typeof userSchema>;

export const loginBodySchema = z.object({
  email: z.string().trim().toLowerCase().email('Enter an e-mail address such as name@example.org'),
  password: z.string().min(1, 'Enter your password'),
});
export type LoginBody = z.infer<typeof loginBodySchema>;

export const userResponseSchema = z.object({ user: userSchema });
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
  email: z.string().trim().toLowerCase().email('Enter an e-mail address such as name@example.org'),
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
export const acceptInviteBodySchema = z.object({
  token: z.string().min(16),
  password: z.string().min(PASSWORD_MIN, `Use at least ${PASSWORD_MIN} characters`).max(200),
});
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

import { z } from 'zod';

/** Keelson's four roles (see the glossary). Deny by default: every API route names the roles it allows. */
export const ROLES = ['admin', 'researcher', 'reviewer', 'desk'] as const;
export const roleSchema = z.enum(ROLES);
export type Role = z.infer<typeof roleSchema>;

export const ROLE_LABELS: Readonly<Record<Role, string>> = {
  admin: 'Admin',
  researcher: 'Researcher',
  reviewer: 'Reviewer',
  desk: 'Desk',
};

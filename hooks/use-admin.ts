/** TanStack Query hooks for the admin (Team) section. */
import { keepPreviousData, useInfiniteQuery, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { InviteBody } from '../shared/auth';
import type { Role } from '../shared/roles';
import type { KeelsonApiError } from '../shared/errors';
import { AUDIT_PAGE_DEFAULT, type AuditPage } from '../shared/audit';
import { createInvitation, listAudit, listInvitations, listOutbox, listUsers, updateUser } from '../api/admin';

export const adminKeys = {
  all: ['admin'] as const,
  users: ['admin', 'users'] as const,
  invitations: ['admin', 'invitations'] as const,
  outbox: ['admin', 'outbox'] as const,
  audit: ['admin', 'audit'] as const,
  auditPages: (limit: number) => ['admin', 'audit', limit] as const,
};

// Lists keep the previous answer on screen while they refetch.
export const useAdminUsers = () => useQuery({ queryKey: adminKeys.users, queryFn: listUsers, placeholderData: keepPreviousData });
export const useInvitations = () => useQuery({ queryKey: adminKeys.invitations, queryFn: listInvitations, placeholderData: keepPreviousData });
export const useAdminOutbox = () => useQuery({ queryKey: adminKeys.outbox, queryFn: listOutbox, placeholderData: keepPreviousData });

/** The audit log in server pages, newest first; `fetchNextPage()` loads the next older page. */
export const useAuditLog = (limit = AUDIT_PAGE_DEFAULT) =>
  useInfiniteQuery<AuditPage, KeelsonApiError, { pages: AuditPage[] }, readonly unknown[], number | undefined>({
    queryKey: adminKeys.auditPages(limit),
    queryFn: ({ pageParam }) => listAudit({ before: pageParam, limit }),
    initialPageParam: undefined,
    getNextPageParam: (last) => last.nextBefore ?? undefined,
  });

export function useUpdateUser() {
  const qc = useQueryClient();
  return useMutation<unknown, KeelsonApiError, { id: number; role?: Role; active?: boolean }>({
    mutationFn: ({ id, ...patch }) => updateUser(id, patch),
    onSuccess: () => qc.invalidateQueries({ queryKey: adminKeys.all }),
  });
}

export function useCreateInvitation() {
  const qc = useQueryClient();
  return useMutation<Awaited<ReturnType<typeof createInvitation>>, KeelsonApiError, InviteBody>({
    // One fresh Idempotency-Key per press (made inside createInvitation), reused by the client's CSRF retry.
    mutationFn: (body) => createInvitation(body),
    onSuccess: () => qc.invalidateQueries({ queryKey: adminKeys.all }),
  });
}

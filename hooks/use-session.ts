/** Session hooks: who is signed in, sign in, sign out, accept an invitation. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { User } from '../shared/auth';
import type { KeelsonApiError } from '../shared/errors';
import { acceptInvitation, getInvitation, getMe, getMyOutbox, login, logout } from '../api/auth';

export const sessionKeys = { me: ['session', 'me'] as const, myOutbox: ['session', 'outbox'] as const };

/** The signed-in user (`data` is null when nobody is signed in). */
export function useMe() {
  return useQuery<User | null, KeelsonApiError>({ queryKey: sessionKeys.me, queryFn: getMe, staleTime: 60_000 });
}

export function useLogin() {
  const qc = useQueryClient();
  return useMutation<User, KeelsonApiError, { email: string; password: string }>({
    mutationFn: ({ email, password }) => login(email, password),
    onSuccess: (user) => {
      qc.clear();
      qc.setQueryData(sessionKeys.me, user);
    },
  });
}

/** Signs out on the server. Call `forgetSession` afterwards (after leaving signed-in screens). */
export function useLogout() {
  return useMutation<void, KeelsonApiError, void>({ mutationFn: () => logout() });
}

/** Drops every cached query and records "nobody signed in". */
export function useForgetSession() {
  const qc = useQueryClient();
  return () => {
    qc.clear();
    qc.setQueryData(sessionKeys.me, null);
  };
}

export function useInvitationPreview(token: string | undefined) {
  return useQuery({
    queryKey: ['invitation', token],
    queryFn: () => getInvitation(token ?? ''),
    enabled: !!token,
    retry: false,
  });
}

export function useAcceptInvitation() {
  const qc = useQueryClient();
  return useMutation<User, KeelsonApiError, { token: string; password: string }>({
    mutationFn: ({ token, password }) => acceptInvitation(token, password),
    onSuccess: (user) => {
      qc.clear();
      qc.setQueryData(sessionKeys.me, user);
    },
  });
}

export function useMyOutbox() {
  return useQuery({ queryKey: sessionKeys.myOutbox, queryFn: getMyOutbox });
}

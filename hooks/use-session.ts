/** Session hooks: who is signed in, sign in, sign out, accept an invitation, change the password. */
import { useEffect } from 'react';
import { Platform } from 'react-native';
import { skipToken, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { User } from '../shared/auth';
import type { KeelsonApiError } from '../shared/errors';
import { acceptInvitation, changePassword, getInvitation, getMe, getMyOutbox, login, logout, type PasswordChangeBody } from '../api/auth';

export const sessionKeys = {
  me: ['session', 'me'] as const,
  myOutbox: ['session', 'outbox'] as const,
  invitation: (token: string) => ['session', 'invitation', token] as const,
};

const HINT_KEY = 'keelson.signed-in';

function storage(): Storage | null {
  if (Platform.OS !== 'web') return null;
  try {
    return typeof window !== 'undefined' && window.localStorage ? window.localStorage : null;
  } catch {
    return null; // storage blocked by the browser's privacy settings
  }
}

/**
 * Whether this browser was signed in when Keelson last knew (`null`: no storage, e.g. native).
 * Only decides what the first frame shows while `/auth/me` is on its way — the signed-in frame's
 * placeholder, or the sign-in form at once — never what the user may see: the server decides that.
 */
export function readSessionHint(): boolean | null {
  const s = storage();
  if (!s) return null;
  try {
    return s.getItem(HINT_KEY) === '1';
  } catch {
    return null;
  }
}

function writeSessionHint(signedIn: boolean): void {
  try {
    const s = storage();
    if (signedIn) s?.setItem(HINT_KEY, '1');
    else s?.removeItem(HINT_KEY);
  } catch {
    /* storage full or blocked: the hint is only a first-frame guess */
  }
}

/** The signed-in user (`data` is null when nobody is signed in). */
export function useMe() {
  const q = useQuery<User | null, KeelsonApiError>({ queryKey: sessionKeys.me, queryFn: getMe, staleTime: 60_000 });
  const known = q.isSuccess ? q.data !== null : undefined;
  useEffect(() => {
    if (known !== undefined) writeSessionHint(known);
  }, [known]);
  return q;
}

export function useLogin() {
  const qc = useQueryClient();
  return useMutation<User, KeelsonApiError, { email: string; password: string }>({
    mutationFn: ({ email, password }) => login(email, password),
    onSuccess: (user) => {
      qc.clear();
      qc.setQueryData(sessionKeys.me, user);
      writeSessionHint(true);
    },
  });
}

/** Signs out on the server. Call `forgetSession` afterwards (after leaving signed-in screens). */
export function useLogout() {
  return useMutation<void, KeelsonApiError, void>({ mutationFn: () => logout(), onSettled: () => writeSessionHint(false) });
}

/** Drops every cached query and records "nobody signed in". */
export function useForgetSession() {
  const qc = useQueryClient();
  return () => {
    qc.clear();
    qc.setQueryData(sessionKeys.me, null);
    writeSessionHint(false);
  };
}

export function useInvitationPreview(token: string | undefined) {
  return useQuery({
    queryKey: sessionKeys.invitation(token ?? ''),
    queryFn: token ? () => getInvitation(token) : skipToken,
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
      writeSessionHint(true);
    },
  });
}

/** `POST /auth/password`; the session stays signed in. */
export function useChangePassword() {
  return useMutation<void, KeelsonApiError, PasswordChangeBody>({ mutationFn: (body) => changePassword(body) });
}

export function useMyOutbox() {
  return useQuery({ queryKey: sessionKeys.myOutbox, queryFn: getMyOutbox });
}

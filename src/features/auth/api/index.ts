/** Session hooks: who is signed in, sign in, sign out, change password. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { ApiError, apiFetch } from '../../../lib/api';
import { announce } from '../../../lib/session-sync';
import { qk } from '../../../lib/query-keys';
import type { ChangePasswordInput, Me, SignInInput, SignInResult } from '../../../../server/modules/auth/contract';

export type {
  ChangePasswordInput,
  Me,
  SessionUser,
  SignInInput,
  SiteInfo,
} from '../../../../server/modules/auth/contract';

/** The signed-in user and site settings; null when nobody is signed in. */
export function useMe() {
  return useQuery({
    queryKey: qk.me,
    queryFn: async (): Promise<Me | null> => {
      try {
        return await apiFetch<Me>('/api/auth/me');
      } catch (e) {
        if (e instanceof ApiError && e.status === 401) return null;
        throw e;
      }
    },
    staleTime: 60_000,
    retry: (count, e) => !(e instanceof ApiError && e.status < 500) && count < 2,
  });
}

export function useSignIn() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: SignInInput) => apiFetch<SignInResult>('/api/auth/sign-in', { method: 'POST', body }),
    onSuccess: async (r) => {
      qc.removeQueries({ predicate: (q) => q.queryKey[0] !== qk.me[0] });
      await qc.invalidateQueries({ queryKey: qk.me });
      // the other tabs share the cookie: they now act as this user and say so (issue 18, item 5)
      announce({ type: 'signed-in', userId: r.user.id, username: r.user.username, fullName: r.user.fullName });
    },
  });
}

export function useSignOut() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => apiFetch<void>('/api/auth/sign-out', { method: 'POST' }),
    onSettled: () => {
      qc.clear();
      qc.setQueryData(qk.me, null);
    },
  });
}

export function useChangePassword() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: ChangePasswordInput) => apiFetch<void>('/api/auth/password', { method: 'POST', body }),
    onSuccess: () => qc.invalidateQueries({ queryKey: qk.me }),
  });
}

/** Account administration hooks (admin only on the server). */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch } from '../../../lib/api';
import { qk } from '../../../lib/query-keys';
import type { CreateUserInput, UpdateUserInput, UserAccount } from '../../../../server/modules/users/contract';

export type { CreateUserInput, UpdateUserInput, UserAccount } from '../../../../server/modules/users/contract';

export function useUsers() {
  return useQuery({ queryKey: qk.users.all, queryFn: () => apiFetch<UserAccount[]>('/api/users') });
}

function useUsersMutation<V, R>(fn: (v: V) => Promise<R>) {
  const qc = useQueryClient();
  return useMutation({ mutationFn: fn, onSuccess: () => qc.invalidateQueries({ queryKey: qk.users.all }) });
}

export function useCreateUser() {
  return useUsersMutation((body: CreateUserInput) => apiFetch<UserAccount>('/api/users', { method: 'POST', body }));
}

export function useUpdateUser() {
  return useUsersMutation(({ id, ...body }: UpdateUserInput & { id: number }) =>
    apiFetch<UserAccount>(`/api/users/${id}`, { method: 'PATCH', body }),
  );
}

export function useUnlockUser() {
  return useUsersMutation(({ id, reason }: { id: number; reason: string }) =>
    apiFetch(`/api/users/${id}/unlock`, { method: 'POST', body: { reason } }),
  );
}

export function useResetPassword() {
  return useUsersMutation(
    ({ id, temporaryPassword, reason }: { id: number; temporaryPassword: string; reason: string }) =>
      apiFetch(`/api/users/${id}/reset-password`, { method: 'POST', body: { temporaryPassword, reason } }),
  );
}

/** Account administration hooks (admin only on the server). */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch } from '../../../lib/api';
import { invalidateMe, qk } from '../../../lib/query-keys';
import type { SignatureInput } from '../../../../server/lib/contract';
import type {
  CreateUserInput,
  RoleChangeWaiting,
  UpdateUserInput,
  UserAccount,
} from '../../../../server/modules/users/contract';

export type {
  CreateUserInput,
  PendingRoleChange,
  RoleChangeWaiting,
  UpdateUserInput,
  UserAccount,
} from '../../../../server/modules/users/contract';

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

/** Role changes waiting for a second administrator (two-person rule). */
export function useRoleChanges() {
  return useQuery({
    queryKey: qk.users.roleChanges,
    queryFn: () => apiFetch<RoleChangeWaiting[]>('/api/users/role-changes'),
  });
}

/** Confirms another administrator's role change with an e-signature. */
export function useConfirmRoleChange() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ requestId, signature }: { requestId: number; signature: SignatureInput }) =>
      apiFetch<UserAccount>(`/api/users/role-changes/${requestId}/confirm`, { method: 'POST', body: { signature } }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: qk.users.all });
      void invalidateMe(qc);
    },
  });
}

/** Declines a role change, or withdraws one's own request. */
export function useDeclineRoleChange() {
  return useUsersMutation(({ requestId, reason }: { requestId: number; reason: string }) =>
    apiFetch<UserAccount>(`/api/users/role-changes/${requestId}/decline`, { method: 'POST', body: { reason } }),
  );
}

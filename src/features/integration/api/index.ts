/** Hooks of the ERP/LIMS link for the administrator: machine accounts and webhooks (the only place this feature talks to the server). */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch } from '../../../lib/api';
import { qk } from '../../../lib/query-keys';
import type {
  MachineAccountCreated,
  MachineAccountRecord,
  MachineScope,
  WebhookDeliveryRecord,
  WebhookEndpointCreated,
  WebhookEndpointRecord,
  WebhookEvent,
} from '../../../../server/modules/integration/contract';

export {
  MACHINE_SCOPES,
  MACHINE_SCOPE_LABELS,
  WEBHOOK_EVENTS,
  machineAccountCreateSchema,
  webhookCreateSchema,
} from '../../../../server/modules/integration/contract';
export type { MachineAccountRecord, MachineScope, WebhookDeliveryRecord, WebhookEndpointRecord, WebhookEvent };

export const useMachineAccounts = () =>
  useQuery({
    queryKey: qk.integration.accounts,
    queryFn: () => apiFetch<MachineAccountRecord[]>('/api/machine-accounts'),
  });

export const useWebhooks = () =>
  useQuery({ queryKey: qk.integration.webhooks, queryFn: () => apiFetch<WebhookEndpointRecord[]>('/api/webhooks') });

export const useDeliveries = () =>
  useQuery({
    queryKey: qk.integration.deliveries,
    queryFn: () => apiFetch<WebhookDeliveryRecord[]>('/api/webhook-deliveries'),
    refetchInterval: 15_000,
  });

function useRefresh() {
  const qc = useQueryClient();
  return () => void qc.invalidateQueries({ queryKey: qk.integration.all });
}

export function useCreateMachineAccount() {
  const refresh = useRefresh();
  return useMutation({
    mutationFn: (body: { name: string; scopes: MachineScope[]; reason: string }) =>
      apiFetch<MachineAccountCreated>('/api/machine-accounts', { method: 'POST', body }),
    onSuccess: refresh,
  });
}

export function useRevokeMachineAccount() {
  const refresh = useRefresh();
  return useMutation({
    mutationFn: (b: { id: number; reason: string }) =>
      apiFetch<MachineAccountRecord>(`/api/machine-accounts/${b.id}/revoke`, {
        method: 'POST',
        body: { reason: b.reason },
      }),
    onSuccess: refresh,
  });
}

export function useCreateWebhook() {
  const refresh = useRefresh();
  return useMutation({
    mutationFn: (body: { name: string; url: string; events: WebhookEvent[] }) =>
      apiFetch<WebhookEndpointCreated>('/api/webhooks', { method: 'POST', body }),
    onSuccess: refresh,
  });
}

export function useDeactivateWebhook() {
  const refresh = useRefresh();
  return useMutation({
    mutationFn: (id: number) => apiFetch<WebhookEndpointRecord>(`/api/webhooks/${id}/deactivate`, { method: 'POST' }),
    onSuccess: refresh,
  });
}

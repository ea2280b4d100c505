/**
 * Integrity alerts shown on a record's page (reference, instrument check, certificate,
 * investigation): nothing when there is none; a warning listing each alert otherwise. Readers
 * without access to alerts (the administrator) see nothing.
 */
import { useQuery } from '@tanstack/react-query';
import { apiFetch } from '../lib/api';
import { qk } from '../lib/query-keys';
import type { IntegrityAlert } from '../../server/modules/integrity/contract';
import { AlertLines } from './IntegrityNotice';

export type AlertRecordType =
  'identity_test' | 'reference_spectrum' | 'instrument_check' | 'instrument' | 'certificate' | 'investigation';

export function RecordAlerts({ type, id, label }: { type: AlertRecordType; id: number; label: string }) {
  const q = useQuery({
    queryKey: qk.integrity.record(type, id),
    queryFn: () => apiFetch<IntegrityAlert[]>(`/api/integrity/records/${type}/${id}`),
    retry: false,
  });
  if (!q.data || q.data.length === 0) return null;
  const open = q.data.filter((a) => !a.signOff).length;
  return (
    <section
      role="alert"
      aria-label={`Data integrity of ${label}`}
      className="mb-4 rounded-md border border-fail/40 bg-fail-soft px-3 py-2 text-sm"
      data-testid="record-alerts"
    >
      <p className="font-medium">
        {open
          ? `${label} carries ${open} open integrity alert(s): its stored data no longer match what was recorded or signed.`
          : `${label} carries integrity alerts that QA signed off.`}
      </p>
      <AlertLines alerts={q.data} />
    </section>
  );
}

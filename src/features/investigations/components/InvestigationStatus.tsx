import { Verdict } from '../../../components/Verdict';
import type { Investigation } from '../api';

export function statusText(i: Pick<Investigation, 'status' | 'decision' | 'kind'>): string {
  if (i.status === 'open') return 'Open: phase I laboratory check to record';
  if (i.status === 'phase1-recorded')
    return i.kind === 'trend' ? 'Phase I recorded: conclusion to record' : 'Phase I recorded: decision to take';
  if (i.decision === 'concluded') return 'Closed: trend signal investigated, conclusion signed';
  if (i.status === 'retest-authorised') return 'Result invalidated: retest authorised';
  return i.decision === 'confirmed' ? 'Closed: failure confirmed, lot rejected' : 'Closed after the authorised retest';
}

export function InvestigationStatus({ inv }: { inv: Pick<Investigation, 'status' | 'decision' | 'kind'> }) {
  if (inv.status === 'closed' && inv.decision === 'confirmed')
    return <Verdict verdict="fail" label={statusText(inv)} />;
  if (inv.status === 'closed') return <Verdict verdict="pass" label={statusText(inv)} />;
  return <Verdict verdict="pending" label={statusText(inv)} />;
}

/** Signatures of a record: printed name, meaning, date and time (21 CFR 11.50). */
import { DateTime } from '../../../components/DateTime';
import type { Signature } from '../api';

const MEANING: Record<string, string> = {
  performed: 'Performed',
  verified: 'Verified',
  returned: 'Returned to the operator',
  'phase-1-recorded': 'Phase I laboratory check recorded',
  'result-invalidated': 'Result invalidated, retest authorised',
  'failure-confirmed': 'Failure confirmed, lot rejected',
};

export function meaningText(m: string): string {
  return MEANING[m] ?? m;
}

export function SignatureList({ signatures }: { signatures: Signature[] }) {
  if (!signatures.length) return <p className="text-sm text-muted">Not signed yet.</p>;
  return (
    <ul className="flex flex-col gap-1 text-sm" aria-label="Signatures">
      {signatures.map((s) => (
        <li key={s.id} data-testid="signature">
          <span className="font-medium">{s.printedName}</span> · {meaningText(s.meaning)} · <DateTime value={s.signedAt} seconds />
          {s.statement && <span className="text-muted"> · “{s.statement}”</span>}
        </li>
      ))}
    </ul>
  );
}

/** Signatures of a record: printed name, meaning, date and time (21 CFR 11.50). */
import { DateTime } from '../../../components/DateTime';
import { meaningLabel } from '../../../lib/signature-meanings';
import type { Signature } from '../api';

export function SignatureList({ signatures }: { signatures: Signature[] }) {
  if (!signatures.length) return <p className="text-sm text-muted">Not signed yet.</p>;
  return (
    <ul className="flex flex-col gap-1 text-sm" aria-label="Signatures">
      {signatures.map((s) => (
        <li key={s.id} data-testid="signature">
          <span className="font-medium">{s.printedName}</span> · {meaningLabel(s.meaning)} ·{' '}
          <DateTime value={s.signedAt} seconds />
          {s.statement && <span className="text-muted"> · “{s.statement}”</span>}
        </li>
      ))}
    </ul>
  );
}

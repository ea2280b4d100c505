/** Signatures shown with the record (21 CFR 11.50): printed name, date and time, meaning, statement. */
import { DateTime } from '../../../components/DateTime';
import type { Signature } from '../api';

const MEANING: Record<string, string> = {
  approved: 'Approved',
  'approved-with-justification': 'Approved with a written justification',
  retired: 'Retired',
  'instrument-check': 'Instrument check performed',
};

export function meaningText(m: string): string {
  return MEANING[m] ?? m;
}

export function SignatureList({ signatures, empty = 'Not signed yet.' }: { signatures: Signature[]; empty?: string }) {
  if (signatures.length === 0) return <p className="text-sm text-muted">{empty}</p>;
  return (
    <ul className="flex flex-col gap-2" aria-label="Signatures">
      {signatures.map((s) => (
        <li key={s.id} className="rounded-md border border-line bg-white px-3 py-2 text-sm" data-testid="signature">
          <div className="flex flex-wrap items-baseline gap-x-3 gap-y-1">
            <span className="font-semibold">{s.printedName}</span>
            <span>{meaningText(s.meaning)}</span>
            <DateTime value={s.signedAt} seconds className="text-muted" />
          </div>
          {s.statement && <p className="mt-1 whitespace-pre-wrap">“{s.statement}”</p>}
          <p className="mt-1 font-mono text-xs break-all text-muted" title="SHA-256 of the signed content">
            content SHA-256 {s.contentHash}
          </p>
        </li>
      ))}
    </ul>
  );
}

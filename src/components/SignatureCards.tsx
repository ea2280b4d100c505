/** Signatures shown with their record (21 CFR 11.50): printed name, meaning, date and time, statement, content hash. */
import { meaningLabel } from '../lib/signature-meanings';
import { DateTime } from './DateTime';

export interface SignatureCard {
  id: number;
  printedName: string;
  meaning: string;
  signedAt: string;
  statement: string | null;
  contentHash: string;
}

export function SignatureCards({
  signatures,
  empty,
  testId = 'signature',
}: {
  signatures: SignatureCard[];
  empty: string;
  testId?: string;
}) {
  if (signatures.length === 0) return <p className="text-sm text-muted">{empty}</p>;
  return (
    <ul className="flex flex-col gap-2" aria-label="Signatures">
      {signatures.map((s) => (
        <li key={s.id} className="rounded-md border border-line bg-white px-3 py-2 text-sm" data-testid={testId}>
          <div className="flex flex-wrap items-baseline gap-x-3 gap-y-1">
            <span className="font-semibold">{s.printedName}</span>
            <span>{meaningLabel(s.meaning)}</span>
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

/** History of an instrument's checks, newest first, each with its signature and band table. */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { Verdict } from '../../../components/Verdict';
import { CHECK_TYPE_LABELS, checkFileUrl, isPolystyreneResult, type InstrumentDetail } from '../api';
import { CheckBandTable } from './CheckBandTable';
import { CheckFigures } from './CheckFigures';

export function CheckHistory({ instrument }: { instrument: InstrumentDetail }) {
  const [open, setOpen] = useState<number | null>(instrument.checks[0]?.id ?? null);
  if (instrument.checks.length === 0) return <p className="text-sm text-muted">No instrument check recorded yet.</p>;
  return (
    <ol className="flex flex-col gap-2" aria-label="Check history">
      {instrument.checks.map((c) => {
        const spec = instrument.specs.find((s) => s.id === c.specId);
        return (
          <li key={c.id} className="rounded-md border border-line bg-white p-3" data-testid="check">
            <div className="flex flex-wrap items-center gap-3 text-sm">
              <Verdict verdict={c.verdict} />
              <span className="font-medium">{CHECK_TYPE_LABELS[c.checkType]}</span>
              <DateTime value={c.performedAt} seconds />
              <span>by {c.performedByName}</span>
              {spec && <span className="text-muted">against specification v{spec.version}</span>}
              {c.validUntil && (
                <span className="text-muted">
                  valid until <DateTime value={c.validUntil} />
                </span>
              )}
              <a href={checkFileUrl(instrument.id, c.id)} className="text-petrol underline underline-offset-2">
                raw file
              </a>
              <Button
                variant="quiet"
                className="ml-auto"
                onClick={() => setOpen(open === c.id ? null : c.id)}
                aria-expanded={open === c.id}
              >
                {open === c.id ? 'Hide bands' : 'Show bands'}
              </Button>
            </div>
            {c.signature && (
              <p className="mt-1 text-xs text-muted">
                Signed by {c.signature.printedName}, meaning: instrument check performed,{' '}
                <DateTime value={c.signature.signedAt} seconds />
              </p>
            )}
            {open === c.id && (
              <div className="mt-2">
                {isPolystyreneResult(c.result) ? (
                  <CheckBandTable result={c.result} />
                ) : (
                  <CheckFigures result={c.result} />
                )}
              </div>
            )}
          </li>
        );
      })}
    </ol>
  );
}

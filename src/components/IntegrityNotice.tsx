/**
 * What a record's page says about the integrity of the data it serves (docs/compliance.md,
 * "Integrity sweep"): nothing loud when every file and signature matches; a plain warning naming
 * each mismatch and each alert, with QA's sign-off when there is one. The server hashed the bytes
 * behind this answer; this component only shows the result.
 */
import { Link } from 'react-router-dom';
import type { IntegrityAlert, RecordIntegrity } from '../../server/modules/integrity/contract';
import { DateTime } from './DateTime';

export function AlertLines({ alerts }: { alerts: IntegrityAlert[] }) {
  return (
    <ul className="mt-1 list-disc pl-5">
      {alerts.map((a) => (
        <li key={a.id}>
          <Link to={`/integrity/alerts/${a.id}`} className="font-medium underline underline-offset-2">
            Alert {a.id}
          </Link>
          : {a.summary}{' '}
          {a.signOff ? (
            <span className="text-muted">
              Signed off by {a.signOff.signedBy} on <DateTime value={a.signOff.signedAt} />: {a.signOff.comment}
            </span>
          ) : (
            <strong>Open: QA has not yet signed it off.</strong>
          )}
        </li>
      ))}
    </ul>
  );
}

export function IntegrityNotice({ integrity }: { integrity: RecordIntegrity }) {
  const files = integrity.files.filter((f) => !f.matches);
  const sigs = integrity.signatures.filter((s) => s.matches === false);
  if (integrity.intact && integrity.alerts.length === 0)
    return (
      <p className="text-sm text-muted" data-testid="integrity-intact">
        Data integrity: the {integrity.files.length} raw file(s) shown here were hashed as served and match their
        recorded SHA-256; {integrity.signatures.length} signature(s) match the record.
      </p>
    );
  return (
    <section
      role="alert"
      aria-label="Data integrity"
      className="rounded-md border border-fail/40 bg-fail-soft px-3 py-2 text-sm"
      data-testid="integrity-warning"
    >
      <p className="font-medium">
        {integrity.intact
          ? 'This record carries integrity alerts.'
          : 'The stored data no longer match what was recorded or signed. Nobody can sign over this record.'}
      </p>
      {files.length > 0 && (
        <ul className="mt-1 list-disc pl-5">
          {files.map((f) => (
            <li key={f.fileId}>
              {f.name}: recorded SHA-256 <span className="font-mono break-all">{f.storedSha256}</span>, bytes now give{' '}
              <span className="font-mono break-all">{f.actualSha256}</span>
            </li>
          ))}
        </ul>
      )}
      {sigs.length > 0 && (
        <p className="mt-1">
          The record no longer matches its {sigs.map((s) => `"${s.meaning}"`).join(', ')} signature(s).
        </p>
      )}
      {integrity.alerts.length > 0 && <AlertLines alerts={integrity.alerts} />}
    </section>
  );
}

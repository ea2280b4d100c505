/**
 * The certificate step after a lot passed identity (DESIGN.md flow 5). Called AFTER the
 * verification transaction has committed, so a certificate problem can never undo a signed
 * verification: the lot then shows "certificate pending" (no certificate row yet), QA's work queue
 * lists it with a retry action and the background retry issues it (docs/certificates.md).
 */
import type { Knex } from 'knex';
import type { Actor } from '../../lib/audit';
import { failureSentence, issueCertificate } from '../certificates';

export async function runCertificateStep(
  db: Knex,
  args: { lotId: number; testId: number; actor: Actor },
): Promise<'issued' | 'pending'> {
  try {
    await issueCertificate(db, args);
    return 'issued';
  } catch (e) {
    // one sentence, never the PDF or an SQL statement with its values (docs/certificates.md)
    console.error(
      `[certificate] lot ${args.lotId}: the certificate could not be issued now; it stays pending:`,
      failureSentence(e),
    );
    return 'pending';
  }
}

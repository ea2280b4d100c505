/**
 * The certificate step after a lot passed identity (docs/architecture.md, "The identity flow"). Called AFTER the
 * verification transaction has committed, so a certificate problem can never undo a signed
 * verification: the lot then shows "certificate pending" (no certificate row yet), QA's work queue
 * lists it with a retry action and the background retry issues it (docs/certificates.md).
 */
import { childLog } from '../../lib/log';
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
    childLog('certificate').error(
      { lotId: args.lotId, reason: failureSentence(e) },
      'the certificate could not be issued now; it stays pending',
    );
    return 'pending';
  }
}

/**
 * The certificate step after a lot passed identity (docs/architecture.md, "The identity flow"). Called AFTER the
 * verification transaction has committed, so a certificate problem can never undo a signed
 * verification: the lot then shows "certificate pending" (no certificate row yet), QA's work queue
 * lists it with a retry action and the background retry issues it (docs/certificates.md).
 */
import { childLog } from '../../lib/log';
import type { Knex } from 'knex';
import type { CertificateRow } from '../../lib/db-tables';
import type { Actor } from '../../lib/audit';
import { failureSentence, issueCertificate } from '../certificates';

export async function runCertificateStep(
  db: Knex,
  args: { lotId: number; testId: number; actor: Actor },
): Promise<'issued' | 'pending'> {
  try {
    await issueCertificate(db, { ...args, ...(await retestSupersession(db, args.lotId)) });
    return 'issued';
  } catch (e) {
    childLog('certificate').error(
      { lotId: args.lotId, reason: failureSentence(e) },
      'the certificate could not be issued now; it stays pending',
    );
    return 'pending';
  }
}

/**
 * A lot passed again in the retest of a released lot (server/modules/disposition/retest.ts): its
 * certificate from before the retest is superseded by one that states the retest's result.
 */
async function retestSupersession(db: Knex, lotId: number): Promise<{ supersedesId?: number; reason?: string }> {
  const retest = await db('lot_retest').where({ lot_id: lotId }).orderBy('id', 'desc').first('started_at', 'reason');
  if (!retest) return {};
  const cert = await db('lot as l')
    .join('certificate as c', 'c.id', 'l.certificate_id')
    .where('l.id', lotId)
    .first<Pick<CertificateRow, 'id' | 'issued_at'> | undefined>('c.id', 'c.issued_at');
  if (!cert || new Date(cert.issued_at) >= new Date(retest.started_at)) return {};
  return { supersedesId: cert.id, reason: `Retest of the released lot: ${retest.reason}`.slice(0, 2000) };
}

/**
 * Certificates that could not be issued (docs/certificates.md, "When issuing fails"): passed lots
 * without a current certificate, whether a number is reserved for them (a failed render, sign,
 * time-stamp or store) or not yet (the process stopped between verification and reservation).
 * QA sees them in the work queue with a retry action; a background job under a lease row retries
 * the automatic ones on every site once per interval. A superseding certificate is only ever
 * retried by QA (it needs QA's signature).
 */
import type { Knex } from 'knex';
import { SYSTEM_ACTOR } from '../../lib/audit';
import type { AppConfig } from '../../lib/config';
import { startJob, type RunningJob } from '../../lib/lease';
import type { PendingCertificate } from './contract';
import { failureSentence, issueMissing } from './issue';
import { openReservationsQuery } from './numbering';

export const RETRY_LEASE = 'certificate-retry';

/** Passed lots still waiting for their certificate, oldest first. */
export async function pendingCertificates(db: Knex): Promise<PendingCertificate[]> {
  const open = await openReservationsQuery(db)
    .join('lot as l', 'l.id', 'n.lot_id')
    .join('material as m', 'm.id', 'l.material_id')
    .select('l.lot_number', 'm.name as material_name', 'l.identity_status');
  const failures = open.length
    ? await db('certificate_issue_failure')
        .whereIn(
          'number_id',
          open.map((o) => o.id),
        )
        .orderBy('id')
        .select('number_id', 'problem', 'failed_at')
    : [];
  const out: PendingCertificate[] = open.map((o) => {
    const mine = failures.filter((f) => f.number_id === o.id);
    return {
      lotId: Number(o.lot_id),
      lotNumber: o.lot_number,
      material: o.material_name,
      number: o.number,
      supersedes: o.supersedes_id !== null,
      reservedAt: new Date(o.reserved_at).toISOString(),
      failures: mine.length,
      lastProblem: mine.at(-1)?.problem ?? null,
      lastFailedAt: mine.length ? new Date(mine.at(-1)!.failed_at).toISOString() : null,
    };
  });
  const reservedLots = new Set(out.filter((p) => !p.supersedes).map((p) => p.lotId));
  const unreserved = await db('lot as l')
    .join('material as m', 'm.id', 'l.material_id')
    .where('l.identity_status', 'passed')
    .whereNull('l.certificate_id')
    .select('l.id', 'l.lot_number', 'm.name as material_name', 'l.updated_at')
    .orderBy('l.id');
  for (const l of unreserved)
    if (!reservedLots.has(Number(l.id)))
      out.push({
        lotId: Number(l.id),
        lotNumber: l.lot_number,
        material: l.material_name,
        number: null,
        supersedes: false,
        reservedAt: null,
        failures: 0,
        lastProblem: null,
        lastFailedAt: null,
      });
  return out;
}

/** One pass of the background retry: issues every automatic pending certificate it can. */
export async function retryPendingCertificates(
  db: Knex,
  config?: AppConfig,
): Promise<{ issued: number; failed: number }> {
  let issued = 0;
  let failed = 0;
  for (const p of await pendingCertificates(db)) {
    if (p.supersedes) continue;
    try {
      const r = await issueMissing(db, p.lotId, SYSTEM_ACTOR, null, config);
      if (r.created) issued++;
    } catch (e) {
      failed++;
      console.error(`[certificate retry] lot ${p.lotNumber}: ${failureSentence(e)}`);
    }
  }
  return { issued, failed };
}

let job: RunningJob | null = null;

export function startCertificateRetryJob(db: Knex, config: AppConfig): RunningJob | null {
  if (config.certificateRetryMinutes <= 0) return null;
  job ??= startJob(db, {
    name: RETRY_LEASE,
    intervalMs: config.certificateRetryMinutes * 60_000,
    run: (d) => retryPendingCertificates(d, config),
  });
  return job;
}

export async function stopCertificateRetryJob(): Promise<void> {
  await job?.stop();
  job = null;
}

/**
 * Certificate numbers IC-YYYY-NNNNN (docs/certificates.md, "Numbers"): taken from the year's
 * counter row in a short transaction that also records the reservation for the lot and its
 * audit event, so a rolled-back reservation leaves no gap and two reservations can never get the
 * same number (the counter row is locked by the upsert until commit; the guard trigger lets it
 * advance by exactly one). The transaction is retried whole after a deadlock or a Galera
 * certification failure. No PDF, signature, time-stamp or mail work happens while it runs.
 */
import type { Knex } from 'knex';
import { appendAudit, type Actor } from '../../lib/audit';
import { conflict, notFound } from '../../lib/errors';
import { formatSiteDate } from '../../lib/contract';
import { transactionWithRetry } from '../../lib/retry';
import { must } from '../../lib/db';
import type { CertificateNumberRow } from '../../lib/db-tables';
import * as repo from './repo';

/** Certificate number IC-YYYY-NNNNN (year in the site's time zone). */
export function formatNumber(year: number, seq: number): string {
  return `IC-${year}-${String(seq).padStart(5, '0')}`;
}

export function yearIn(d: Date, timeZone: string): number {
  return Number(formatSiteDate(d, timeZone).slice(0, 4));
}

export interface Reservation {
  id: number;
  number: string;
  lotId: number;
  testId: number;
  supersedesId: number | null;
  reservedAt: Date;
}

type ReservationRow = Pick<
  CertificateNumberRow,
  'id' | 'number' | 'lot_id' | 'test_id' | 'supersedes_id' | 'reserved_at'
>;

const toReservation = (r: ReservationRow): Reservation => ({
  id: r.id,
  number: r.number,
  lotId: r.lot_id,
  testId: r.test_id,
  supersedesId: r.supersedes_id,
  reservedAt: new Date(r.reserved_at),
});

/** Reserved numbers that no certificate carries yet (oldest first). */
export function openReservationsQuery(db: Knex | Knex.Transaction) {
  return db('certificate_number as n')
    .leftJoin('certificate as c', 'c.number', 'n.number')
    .whereNull('c.id')
    .select<ReservationRow[]>('n.id', 'n.number', 'n.lot_id', 'n.test_id', 'n.supersedes_id', 'n.reserved_at')
    .orderBy('n.id');
}

export async function openReservations(db: Knex): Promise<Reservation[]> {
  return (await openReservationsQuery(db)).map(toReservation);
}

/** Thrown inside the reservation when the lot already has its certificate. */
export class AlreadyIssued extends Error {
  constructor(public certificateId: number) {
    super('already issued');
  }
}

/**
 * The number for issuing a lot's certificate: the lot's open reservation for the same
 * predecessor if there is one (a retry reuses its number), otherwise a new one from the counter.
 */
export async function reserveNumber(
  db: Knex,
  input: { lotId: number; testId: number; supersedesId: number | null; actor: Actor; timeZone: string },
): Promise<Reservation> {
  return transactionWithRetry(db, async (trx) => {
    // The lot first, then the counter, then the audit head: every path takes them in this order.
    const lot = await repo.lockLot(trx, input.lotId);
    if (!lot) throw notFound('The lot');
    if (lot.identity_status !== 'passed')
      throw conflict(`Lot ${lot.lot_number} has not passed identity (status: ${lot.identity_status}).`);
    if (input.supersedesId === null && lot.certificate_id) throw new AlreadyIssued(lot.certificate_id);
    const open = await openReservationsQuery(trx)
      .where('n.lot_id', input.lotId)
      .where((w) =>
        input.supersedesId === null ? w.whereNull('n.supersedes_id') : w.where('n.supersedes_id', input.supersedesId),
      )
      .first();
    if (open) return toReservation(open);

    const reservedAt = new Date();
    const year = yearIn(reservedAt, input.timeZone);
    await trx.raw(
      'INSERT INTO certificate_counter (year, last_seq) VALUES (?, 1) ON DUPLICATE KEY UPDATE last_seq = last_seq + 1',
      [year],
    );
    // the statement above has just written the year's counter row
    const counter = await trx('certificate_counter').where({ year }).first('last_seq');
    const seq = must(counter, `The certificate counter of ${year}`).last_seq;
    const number = formatNumber(year, seq);
    const [id] = await trx('certificate_number').insert({
      number,
      year,
      seq,
      lot_id: input.lotId,
      test_id: input.testId,
      supersedes_id: input.supersedesId,
      reserved_by: input.actor.id,
      reserved_at: reservedAt,
    });
    await appendAudit(trx, {
      actor: input.actor,
      action: 'certificate.number-reserved',
      entityType: 'lot',
      entityId: input.lotId,
      after: { number, testId: input.testId, supersedesId: input.supersedesId },
    });
    return {
      id: Number(id),
      number,
      lotId: input.lotId,
      testId: input.testId,
      supersedesId: input.supersedesId,
      reservedAt,
    };
  });
}

/**
 * The QA overview (docs/trending.md): the figures QA reports to management for a chosen period,
 * computed from the records as stored. Read-only. Definitions:
 *  - open investigations by age (now, whatever the period): days since opening;
 *  - first-pass rate per source: of the lots received in the period that have a verified test,
 *    those whose first verified test is attempt 1 and whose lot passed without an investigation;
 *  - invalid-measurement rate per instrument and per operator: measurements recorded in the period
 *    that the quality check refused, of all measurements recorded;
 *  - receipt to certificate: for the first certificate of each lot issued in the period, the days
 *    from the lot's received date to the certificate's issue time (median over the lots).
 */
import type { Knex } from 'knex';
import type { CertificateRow, InvestigationRow, LotRow, MeasurementRow } from '../../lib/db-tables';
import { median } from 'simple-statistics';
import type { QaOverview, RateRow } from './contract';

const DAY = 86_400_000;
const bounds = (from: string, to: string): [Date, Date] => [
  new Date(`${from}T00:00:00.000Z`),
  new Date(new Date(`${to}T00:00:00.000Z`).getTime() + DAY),
];

function rates(rows: { key: string; label: string; hit: boolean }[]): RateRow[] {
  const m = new Map<string, RateRow>();
  for (const r of rows) {
    const x = m.get(r.key) ?? { key: r.key, label: r.label, count: 0, total: 0, rate: null };
    x.total++;
    if (r.hit) x.count++;
    m.set(r.key, x);
  }
  return [...m.values()]
    .map((x) => ({ ...x, rate: x.total ? x.count / x.total : null }))
    .sort((a, b) => a.label.localeCompare(b.label));
}

export async function qaOverview(db: Knex, from: string, to: string, now = new Date()): Promise<QaOverview> {
  const [a, b] = bounds(from, to);

  // an investigation of a trend signal holds no lot (db/migrations/155_trend_investigation.ts)
  const open = await db('investigation as i')
    .leftJoin('lot as l', 'l.id', 'i.lot_id')
    .whereIn('i.status', ['open', 'phase1-recorded', 'retest-authorised'])
    .orderBy('i.opened_at')
    .select<(Pick<InvestigationRow, 'id' | 'number' | 'opened_at' | 'kind'> & { lot_number: string | null })[]>(
      'i.id',
      'i.number',
      'i.opened_at',
      'i.kind',
      'l.lot_number',
    );
  const openInvestigations = open.map((r) => ({
    id: r.id,
    number: r.number,
    lotNumber: r.kind === 'trend' ? 'trend signal' : (r.lot_number ?? ''),
    openedAt: new Date(r.opened_at).toISOString(),
    ageDays: Math.floor((now.getTime() - new Date(r.opened_at).getTime()) / DAY),
  }));
  const buckets: [string, (d: number) => boolean][] = [
    ['under 7 days', (d) => d < 7],
    ['7 to 29 days', (d) => d >= 7 && d < 30],
    ['30 days or more', (d) => d >= 30],
  ];

  const lots = await db('lot')
    .where('received_date', '>=', from)
    .andWhere('received_date', '<=', to)
    .select('id', 'supplier', 'identity_status');
  const lotIds = lots.map((l) => l.id);
  const tests = lotIds.length
    ? await db('identity_test').whereIn('lot_id', lotIds).where('status', 'verified').select('lot_id', 'attempt')
    : [];
  const invs = lotIds.length ? await db('investigation').whereIn('lot_id', lotIds).select('lot_id') : [];
  const withInv = new Set(invs.map((i) => i.lot_id));
  const firstVerified = new Map<number, number>();
  for (const t of tests) firstVerified.set(t.lot_id, Math.min(firstVerified.get(t.lot_id) ?? Infinity, t.attempt));
  const firstPassBySource = rates(
    lots
      .filter((l) => firstVerified.has(l.id))
      .map((l) => ({
        key: l.supplier,
        label: l.supplier,
        hit: firstVerified.get(l.id) === 1 && l.identity_status === 'passed' && !withInv.has(l.id),
      })),
  );

  const ms = await db('measurement as me')
    .join('instrument as ins', 'ins.id', 'me.instrument_id')
    .join('app_user as u', 'u.id', 'me.created_by')
    .where('me.created_at', '>=', a)
    .andWhere('me.created_at', '<', b)
    .select<(Pick<MeasurementRow, 'verdict' | 'instrument_id' | 'created_by'> & { name: string; full_name: string })[]>(
      'me.verdict',
      'me.instrument_id',
      'ins.name',
      'me.created_by',
      'u.full_name',
    );
  const invalidByInstrument = rates(
    ms.map((m) => ({ key: String(m.instrument_id), label: m.name, hit: m.verdict === 'invalid' })),
  );
  const invalidByOperator = rates(
    ms.map((m) => ({ key: String(m.created_by), label: m.full_name, hit: m.verdict === 'invalid' })),
  );

  const certs = await db('certificate as c')
    .join('lot as l', 'l.id', 'c.lot_id')
    .whereNull('c.supersedes_id')
    .where('c.issued_at', '>=', a)
    .andWhere('c.issued_at', '<', b)
    .orderBy('c.issued_at')
    .select<(Pick<CertificateRow, 'issued_at'> & Pick<LotRow, 'lot_number' | 'supplier' | 'received_date'>)[]>(
      'c.issued_at',
      'l.lot_number',
      'l.supplier',
      'l.received_date',
    );
  const receiptToCertificate = certs.map((c) => {
    const received = new Date(`${new Date(c.received_date).toISOString().slice(0, 10)}T00:00:00.000Z`);
    return {
      lotNumber: c.lot_number,
      source: c.supplier,
      days: Math.round(((new Date(c.issued_at).getTime() - received.getTime()) / DAY) * 10) / 10,
      issuedAt: new Date(c.issued_at).toISOString(),
    };
  });
  return {
    from,
    to,
    openInvestigations,
    investigationAgeBuckets: buckets.map(([label, f]) => ({
      label,
      count: openInvestigations.filter((i) => f(i.ageDays)).length,
    })),
    firstPassBySource,
    invalidByInstrument,
    invalidByOperator,
    receiptToCertificate,
    receiptToCertificateMedianDays: receiptToCertificate.length
      ? median(receiptToCertificate.map((r) => r.days))
      : null,
    notes: [
      'Open investigations are counted now, whatever the period.',
      'First pass: the lot’s first verified test is attempt 1, the lot passed, and no investigation was opened.',
      'Receipt to certificate: the lot’s received date (start of day, UTC) to the issue of its first certificate.',
    ],
  };
}

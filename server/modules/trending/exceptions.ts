/**
 * Review by exception (docs/trending.md): what is unusual in one test attempt, so that the
 * verifier's review leads with it. Read-only; the review page still lists every measurement and
 * the verifier still signs for all of them.
 *
 * Exceptions:
 *  - near-limit: a criterion of the latest measurement of a container is within the near-limit
 *    margin of its limit (NEAR_LIMIT below; Drumline's own default, not a standard);
 *  - unusual-shift: the largest band shift is above the upper control limit of the material's
 *    band-shift chart (needs 20 trended points);
 *  - repeated: a container was measured more than once in this attempt;
 *  - invalid: a measurement was refused by the quality check;
 *  - time-anomaly: the attempt's measurements span more than one working shift;
 *  - open-signal: a trend signal is open on the material (any series) or on this lot's source, or
 *    is under an investigation that is still open.
 */
import type { Knex } from 'knex';
import { parseJson } from '../../lib/db';
import type { ContainerRow, IdentityTestRow, LotRow, MeasurementRow } from '../../lib/db-tables';
import { notFound } from '../../lib/errors';
import { TREND_CAUTION, type ReviewException, type ReviewExceptions } from './contract';
import { metricsOf, trendRows, latestBaseline, listSignals } from './repo';
import { buildSeries } from './service';

/**
 * The near-limit margins: a correlation-type criterion (">=", limit below 1) is near when it is
 * within a quarter of the way from its limit to 1; a "<=" criterion when it reaches 80 % of its
 * limit. Drumline's own default (not taken from a standard); docs/trending.md.
 */
export const NEAR_LIMIT = { towardsOne: 0.25, ofUpperLimit: 0.8 };
/** Longer than one working shift (common practice: an 8-hour shift). */
export const SHIFT_HOURS = 8;

interface Criterion {
  key: string;
  name: string;
  value: number;
  limit: number;
  comparison: '>=' | '<=';
  verdict: string;
}

export function nearLimit(c: Criterion): boolean {
  if (c.verdict !== 'pass' || !Number.isFinite(c.value) || !Number.isFinite(c.limit)) return false;
  if (c.comparison === '>=' && c.limit < 1) return c.value < c.limit + NEAR_LIMIT.towardsOne * (1 - c.limit);
  if (c.comparison === '<=' && c.limit > 0) return c.value >= NEAR_LIMIT.ofUpperLimit * c.limit;
  return false;
}

const fmt = (v: number) => (Math.abs(v) < 10 ? v.toFixed(4) : v.toFixed(1));

export async function reviewExceptions(db: Knex, testId: number): Promise<ReviewExceptions> {
  const test = await db('identity_test as t')
    .join('lot as l', 'l.id', 't.lot_id')
    .where('t.id', testId)
    .first<
      | (Pick<IdentityTestRow, 'id' | 'method_id'> &
          Pick<LotRow, 'material_id' | 'supplier' | 'received_date' | 'container_count'>)
      | undefined
    >('t.id', 't.method_id', 'l.material_id', 'l.supplier', 'l.received_date', 'l.container_count');
  if (!test) throw notFound('The test');
  const ms = await db('measurement as me')
    .join('container as c', 'c.id', 'me.container_id')
    .where('me.test_id', testId)
    .orderBy('me.id')
    .select<
      (Pick<MeasurementRow, 'id' | 'container_id' | 'verdict' | 'result' | 'created_at' | 'method_id'> &
        Pick<ContainerRow, 'label'>)[]
    >('me.id', 'me.container_id', 'me.verdict', 'me.result', 'me.created_at', 'me.method_id', 'c.label');
  const out: ReviewException[] = [];
  const byContainer = new Map<number, typeof ms>();
  for (const m of ms) byContainer.set(m.container_id, [...(byContainer.get(m.container_id) ?? []), m]);

  // the material's band-shift chart under this method version (scope: all)
  const rows = await trendRows(db, test.method_id);
  const shiftChart = buildSeries(rows, 'band-shift', 'all', '', await latestBaseline(db, test.method_id));

  for (const [containerId, list] of byContainer) {
    const label = list[0].label;
    if (list.length > 1)
      out.push({
        kind: 'repeated',
        containerId,
        containerLabel: label,
        measurementId: list.at(-1)!.id,
        text: `${label} was measured ${list.length} times in this attempt (measurements ${list.map((m) => m.id).join(', ')}); every one stays on record.`,
      });
    for (const m of list.filter((x) => x.verdict === 'invalid'))
      out.push({
        kind: 'invalid',
        containerId,
        containerLabel: label,
        measurementId: m.id,
        text: `Measurement ${m.id} of ${label} was refused by the quality check (invalid, neither pass nor fail).`,
      });
    const latest = list.at(-1)!;
    if (latest.verdict === 'invalid') continue;
    const result = parseJson<{ criteria?: Criterion[] }>(latest.result, {});
    for (const c of (result.criteria ?? []).filter(nearLimit))
      out.push({
        kind: 'near-limit',
        containerId,
        containerLabel: label,
        measurementId: latest.id,
        text: `${label}: ${c.name} ${fmt(c.value)} passes, close to its limit ${c.comparison} ${fmt(c.limit)}.`,
      });
    const shift = metricsOf(latest.result)['band-shift'];
    if (shift !== null && shiftChart.limits && shift > shiftChart.limits.ucl)
      out.push({
        kind: 'unusual-shift',
        containerId,
        containerLabel: label,
        measurementId: latest.id,
        text: `${label}: largest band shift ${shift.toFixed(2)} cm⁻¹, above the upper control limit ${shiftChart.limits.ucl.toFixed(2)} cm⁻¹ of this material’s band-shift chart (${shiftChart.limits.basis}).`,
      });
  }

  if (ms.length > 1) {
    const times = ms.map((m) => new Date(m.created_at).getTime());
    const span = (Math.max(...times) - Math.min(...times)) / 3_600_000;
    if (span > SHIFT_HOURS)
      out.push({
        kind: 'time-anomaly',
        containerId: null,
        containerLabel: null,
        measurementId: null,
        text: `The measurements of this attempt span ${span.toFixed(1)} hours, longer than one ${SHIFT_HOURS}-hour shift: check that the containers were sampled and measured as the procedure asks.`,
      });
  }

  // an investigated signal stays an exception while its investigation is open
  const all = await listSignals(db, { status: 'all', materialId: test.material_id });
  const investigated = all
    .filter((s) => s.status === 'investigated' && s.investigationId)
    .map((s) => s.investigationId!);
  const stillOpen = new Set(
    investigated.length
      ? (await db('investigation').whereIn('id', investigated).whereNot('status', 'closed').select('id')).map(
          (r) => r.id,
        )
      : [],
  );
  const signals = all.filter(
    (s) =>
      (s.status === 'open' || (s.status === 'investigated' && stillOpen.has(s.investigationId!))) &&
      (s.scopeKind !== 'source' || s.scopeValue === test.supplier),
  );
  for (const s of signals)
    out.push({
      kind: 'open-signal',
      containerId: null,
      containerLabel: null,
      measurementId: s.measurementId,
      text:
        s.status === 'investigated'
          ? `Trend signal ${s.id} on ${s.materialName} (${s.scopeLabel}) is under investigation ${s.investigationNumber}: ${s.ruleText}.`
          : `Open trend signal ${s.id} on ${s.materialName} (${s.scopeLabel}): ${s.ruleText}.`,
    });

  const flagged = new Set(out.filter((e) => e.containerId !== null).map((e) => e.containerId));
  return {
    testId,
    exceptions: out,
    plainContainers: byContainer.size - flagged.size,
    containers: byContainer.size,
    caution: TREND_CAUTION,
  };
}

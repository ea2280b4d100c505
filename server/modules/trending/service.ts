/**
 * Trending of passed identity results (docs/trending.md). Per identity-method version, and
 * filtered by source (supplier), instrument or operator, the correlation coefficient, the
 * first-derivative correlation and the largest band shift of passed measurements of verified
 * tests are charted as individuals and moving-range charts (control-chart.ts). A scan (a job
 * that runs once per site under a lease, and on QA's request) applies the run rules and raises
 * an early-warning signal for the newest rule hit on each chart, never a failure: the
 * signal is listed in QA's work queue, mailed to QA, audited, and stays open until QA
 * acknowledges it with a comment (audited).
 */
import type { Knex } from 'knex';
import { appendAudit, SYSTEM_ACTOR } from '../../lib/audit';
import { conflict, notFound, unprocessable } from '../../lib/errors';
import type { IdentityMethodRow } from '../../lib/db-tables';
import type { AuthUser } from '../../lib/http';
import { startJob, type RunningJob } from '../../lib/lease';
import { enqueueMailToRole } from '../../lib/mail';
import { transactionWithRetry } from '../../lib/retry';
import { csvLine } from '../audit';
import { pageLink } from '../../lib/links';
import {
  METRIC_LABELS,
  METRICS,
  TREND_CAUTION,
  type AcknowledgeInput,
  type BaselineInput,
  type ChartLimits,
  type ChartPoint,
  type ChartQuery,
  type ChartResponse,
  type Metric,
  type ScanReport,
  type ScopeKind,
  type SeriesOption,
  type TrendBaseline,
  type TrendMethodOption,
  type TrendSignal,
} from './contract';
import { chartLimits, evaluateRules, limitsFrom, MIN_POINTS, movingRanges, RULES, type RuleHit } from './control-chart';
import * as repo from './repo';
import type { TrendRow } from './repo';

/** Fewest baseline points QA's period must hold in a series before its limits replace the first 20 points. */
export const MIN_BASELINE_POINTS = 5;

function inScope(r: TrendRow, scope: ScopeKind, value: string): boolean {
  if (scope === 'source') return r.source === value;
  if (scope === 'instrument') return String(r.instrumentId) === value;
  if (scope === 'operator') return String(r.operatorId) === value;
  return true;
}

function scopeLabel(rows: TrendRow[], scope: ScopeKind, value: string): string {
  if (scope === 'all') return 'All sources, instruments and operators';
  if (scope === 'source') return `Source ${value}`;
  const r = rows.find((x) => inScope(x, scope, value));
  if (scope === 'instrument') return `Instrument ${r?.instrument ?? value}`;
  return `Operator ${r?.operator ?? value}`;
}

const dayStart = (iso: string) => new Date(`${iso.slice(0, 10)}T00:00:00.000Z`).getTime();

interface Series {
  rows: TrendRow[];
  values: number[];
  limits: ChartLimits | null;
  hits: RuleHit[];
}

/** One chart's points, limits and run-rule hits (the maths of control-chart.ts on stored results). */
export function buildSeries(
  all: TrendRow[],
  metric: Metric,
  scope: ScopeKind,
  value: string,
  baseline: TrendBaseline | null,
): Series {
  const rows = all.filter((r) => inScope(r, scope, value) && r.metrics[metric] !== null);
  const values = rows.flatMap((r) => r.metrics[metric] ?? []);
  let limits: ChartLimits | null = null;
  if (baseline) {
    const from = dayStart(baseline.from);
    const to = dayStart(baseline.to) + 86_400_000;
    const inBase = rows.map((r, i) => [r.at.getTime(), values[i]]).filter(([t]) => t >= from && t < to);
    if (inBase.length >= MIN_BASELINE_POINTS)
      limits = {
        ...limitsFrom(inBase.map(([, v]) => v)),
        basis: `Baseline fixed by ${baseline.fixedBy.name}: ${inBase.length} points from ${baseline.from.slice(0, 10)} to ${baseline.to.slice(0, 10)}`,
      };
  }
  if (!limits) {
    const l = chartLimits(values);
    if (l)
      limits = {
        ...l,
        basis: baseline
          ? `The first ${MIN_POINTS} points (QA’s baseline holds fewer than ${MIN_BASELINE_POINTS} points of this series)`
          : `The first ${MIN_POINTS} points (no baseline fixed by QA yet)`,
      };
  }
  return { rows, values, limits, hits: limits ? evaluateRules(values, limits) : [] };
}

function toPoints(s: Series): ChartPoint[] {
  const mrs = movingRanges(s.values);
  return s.rows.map((r, i) => ({
    measurementId: r.measurementId,
    at: r.at.toISOString(),
    value: s.values[i],
    mr: mrs[i],
    lotNumber: r.lotNumber,
    container: r.container,
    source: r.source,
    instrument: r.instrument,
    operator: r.operator,
  }));
}

async function methodInfo(db: Knex, methodId: number) {
  const m = await db('identity_method as im')
    .join('material as ma', 'ma.id', 'im.material_id')
    .where('im.id', methodId)
    .first<(Pick<IdentityMethodRow, 'id' | 'version'> & { material_id: number; material_name: string }) | undefined>(
      'im.id',
      'im.version',
      'ma.id as material_id',
      'ma.name as material_name',
    );
  if (!m) throw notFound('The identity method');
  return m;
}

export async function chart(db: Knex, q: ChartQuery): Promise<ChartResponse> {
  const m = await methodInfo(db, q.methodId);
  const rows = await repo.trendRows(db, q.methodId);
  const baseline = await repo.latestBaseline(db, q.methodId);
  const s = buildSeries(rows, q.metric, q.scope, q.value, baseline);
  const value = q.scope === 'all' ? '' : q.value;
  return {
    materialId: m.material_id,
    materialName: m.material_name,
    methodId: m.id,
    methodVersion: m.version,
    metric: q.metric,
    scope: q.scope,
    value,
    scopeLabel: scopeLabel(rows, q.scope, value),
    points: toPoints(s),
    limits: s.limits,
    baseline,
    hits: s.hits.map((h) => ({
      rule: h.rule,
      text: RULES[h.rule].text,
      source: RULES[h.rule].source,
      measurementId: s.rows[h.index].measurementId,
      pointIds: h.points.map((i) => s.rows[i].measurementId),
    })),
    signals: await repo.listSignals(db, {
      status: 'all',
      methodId: q.methodId,
      metric: q.metric,
      scope: q.scope,
      value,
    }),
    minPoints: MIN_POINTS,
    caution: TREND_CAUTION,
  };
}

/** The chart as CSV (formula-safe cells, server/modules/audit/csv.ts). */
export async function chartCsv(db: Knex, q: ChartQuery): Promise<{ fileName: string; csv: string }> {
  const c = await chart(db, q);
  const hitRules = new Map<number, string[]>();
  for (const h of c.hits) hitRules.set(h.measurementId, [...(hitRules.get(h.measurementId) ?? []), h.text]);
  const lines = [
    csvLine(['# Drumline trend', c.materialName, `method version ${c.methodVersion}`, METRIC_LABELS[c.metric].title]),
    csvLine(['# scope', c.scopeLabel]),
    csvLine(['# limits', c.limits ? c.limits.basis : `fewer than ${c.minPoints} points: no limits yet`]),
    csvLine([
      '# centre',
      c.limits?.centre ?? '',
      'lcl',
      c.limits?.lcl ?? '',
      'ucl',
      c.limits?.ucl ?? '',
      'mr ucl',
      c.limits?.mrUcl ?? '',
    ]),
    csvLine(['# caution', c.caution]),
    csvLine([
      'measurement_id',
      'recorded_at_utc',
      'value',
      'moving_range',
      'lot',
      'container',
      'source',
      'instrument',
      'operator',
      'run_rules',
    ]),
    ...c.points.map((p) =>
      csvLine([
        p.measurementId,
        p.at,
        p.value,
        p.mr ?? '',
        p.lotNumber,
        p.container,
        p.source,
        p.instrument,
        p.operator,
        (hitRules.get(p.measurementId) ?? []).join('; '),
      ]),
    ),
  ];
  const safe = c.materialName.replace(/[^A-Za-z0-9]+/g, '-').replace(/^-|-$/g, '');
  return { fileName: `trend-${safe}-v${c.methodVersion}-${c.metric}.csv`, csv: lines.join('') };
}

function options(rows: TrendRow[], key: (r: TrendRow) => [string, string]): SeriesOption[] {
  const m = new Map<string, SeriesOption>();
  for (const r of rows) {
    const [value, label] = key(r);
    const o = m.get(value) ?? { value, label, points: 0 };
    o.points++;
    m.set(value, o);
  }
  return [...m.values()].sort((a, b) => a.label.localeCompare(b.label));
}

/** Every method version with trended points, and the sources, instruments and operators to filter by. */
export async function trendOptions(db: Knex): Promise<TrendMethodOption[]> {
  const out: TrendMethodOption[] = [];
  const open = await repo.listSignals(db, { status: 'open' });
  for (const methodId of await repo.trendedMethodIds(db)) {
    const m = await methodInfo(db, methodId);
    const rows = await repo.trendRows(db, methodId);
    out.push({
      materialId: m.material_id,
      materialName: m.material_name,
      methodId,
      methodVersion: m.version,
      points: rows.length,
      openSignals: open.filter((s) => s.methodId === methodId).length,
      sources: options(rows, (r) => [r.source, r.source]),
      instruments: options(rows, (r) => [String(r.instrumentId), r.instrument]),
      operators: options(rows, (r) => [String(r.operatorId), r.operator]),
    });
  }
  return out.sort((a, b) => a.materialName.localeCompare(b.materialName) || a.methodVersion - b.methodVersion);
}

const fmt = (metric: Metric, v: number) =>
  `${v.toFixed(METRIC_LABELS[metric].digits)}${METRIC_LABELS[metric].unit ? ` ${METRIC_LABELS[metric].unit}` : ''}`;

/**
 * Applies the run rules to every chart of every method version (all results, and each source,
 * instrument and operator whose filter leaves out some results) and raises one signal per chart
 * for its newest rule hit, unless a signal is still open on the chart or the hit is not newer than
 * the chart's last signal. One open signal per chart keeps the warnings few enough to be read.
 */
export async function scanTrends(db: Knex): Promise<ScanReport> {
  let series = 0;
  let raised = 0;
  for (const methodId of await repo.trendedMethodIds(db)) {
    const rows = await repo.trendRows(db, methodId);
    const baseline = await repo.latestBaseline(db, methodId);
    const scopes: [ScopeKind, string][] = [
      ['all', ''],
      ...[...new Set(rows.map((r) => r.source))].map((v): [ScopeKind, string] => ['source', v]),
      ...[...new Set(rows.map((r) => String(r.instrumentId)))].map((v): [ScopeKind, string] => ['instrument', v]),
      ...[...new Set(rows.map((r) => String(r.operatorId)))].map((v): [ScopeKind, string] => ['operator', v]),
    ];
    for (const metric of METRICS)
      for (const [scope, value] of scopes) {
        const s = buildSeries(rows, metric, scope, value, baseline);
        // a filter that keeps every result draws the same chart as "all": no second signal for it
        if (!s.limits || (scope !== 'all' && s.rows.length === rows.length)) continue;
        series++;
        // one open signal per chart: the newest hit (the first rule in RULES order at that point)
        const last = s.hits.reduce((m, h) => Math.max(m, h.index), -1);
        if (last < 0) continue;
        const order = Object.keys(RULES);
        const atLast = s.hits
          .filter((h) => h.index === last)
          .sort((a, b) => order.indexOf(a.rule) - order.indexOf(b.rule));
        const also = [...new Set(atLast.slice(1).map((h) => RULES[h.rule].text))];
        if (
          await raiseSignal(
            db,
            s,
            atLast[0],
            { methodId, metric, scope, value, label: scopeLabel(rows, scope, value) },
            also,
          )
        )
          raised++;
      }
  }
  return { series, raised };
}

async function raiseSignal(
  db: Knex,
  s: Series,
  h: RuleHit,
  k: { methodId: number; metric: Metric; scope: ScopeKind; value: string; label: string },
  also: string[] = [],
): Promise<boolean> {
  const point = s.rows[h.index];
  const chartKey = { method_id: k.methodId, metric: k.metric, scope_kind: k.scope, scope_value: k.value };
  const key = { ...chartKey, rule: h.rule };
  const last = await db('trend_signal').where(chartKey).orderBy('id', 'desc').first('status', 'measurement_id');
  if (last?.status === 'open') return false;
  if (last) {
    const lastIndex = s.rows.findIndex((r) => r.measurementId === last.measurement_id);
    if (lastIndex >= h.index) return false;
  }
  const limits = s.limits!;
  const rule = RULES[h.rule];
  const value = point.metrics[k.metric];
  if (value === null) throw new Error(`trend point ${point.measurementId} has no ${k.metric} but a rule hit it`);
  const detail =
    `${rule.text}: ${METRIC_LABELS[k.metric].title} ${fmt(k.metric, value)} at container ` +
    `${point.container} (lot ${point.lotNumber}, source ${point.source}); centre ${fmt(k.metric, limits.centre)}, ` +
    `control limits ${fmt(k.metric, limits.lcl)} to ${fmt(k.metric, limits.ucl)} (${limits.basis}). Rule: ${rule.source}.` +
    (also.length ? ` At the same point also: ${also.join('; ')}.` : '');
  return transactionWithRetry(db, async (trx) => {
    const [id] = await trx('trend_signal')
      .insert<number[]>({
        ...key,
        material_id: point.materialId,
        scope_label: k.label.slice(0, 200),
        measurement_id: point.measurementId,
        point_ids: JSON.stringify(h.points.map((i) => s.rows[i].measurementId)),
        value,
        limits: JSON.stringify(limits),
        detail,
        status: 'open',
        raised_at: new Date(),
      })
      .onConflict()
      .ignore();
    if (!id) return false;
    await appendAudit(trx, {
      actor: SYSTEM_ACTOR,
      action: 'trend.signal-raised',
      entityType: 'trend_signal',
      entityId: id,
      after: {
        material: point.materialName,
        methodVersion: point.methodVersion,
        metric: k.metric,
        scope: k.label,
        rule: h.rule,
        measurementId: point.measurementId,
      },
      reason: detail,
      ip: null,
    });
    await enqueueMailToRole(
      trx,
      'qa_manager',
      `Trend signal: ${point.materialName}, ${k.label}`,
      [
        `An early-warning signal was raised on the trend of ${point.materialName} (identity method version ${point.methodVersion}), ${k.label}.`,
        detail,
        '',
        TREND_CAUTION,
        `Open the chart and acknowledge the signal: ${pageLink(`/trending/signals/${id}`)}`,
      ].join('\n'),
    );
    return true;
  });
}

export async function getSignal(db: Knex, id: number): Promise<TrendSignal> {
  const s = await repo.findSignal(db, id);
  if (!s) throw notFound('The trend signal');
  return s;
}

export async function acknowledge(
  db: Knex,
  user: AuthUser,
  id: number,
  input: AcknowledgeInput,
  ip: string | null,
): Promise<TrendSignal> {
  await transactionWithRetry(db, async (trx) => {
    const row = await repo.lockSignal(trx, id);
    if (!row) throw notFound('The trend signal');
    if (row.status === 'investigated')
      throw conflict(`Trend signal ${id} is under investigation; its investigation records the outcome.`);
    if (row.status !== 'open') throw conflict(`Trend signal ${id} is already acknowledged.`);
    const now = new Date();
    await trx('trend_signal')
      .where({ id })
      .update({ status: 'acknowledged', acknowledged_by: user.id, acknowledged_at: now, ack_comment: input.comment });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'trend.signal-acknowledged',
      entityType: 'trend_signal',
      entityId: id,
      before: { status: 'open' },
      after: { status: 'acknowledged', comment: input.comment },
      reason: input.comment,
      ip,
    });
  });
  return getSignal(db, id);
}

export async function fixBaseline(
  db: Knex,
  user: AuthUser,
  input: BaselineInput,
  ip: string | null,
): Promise<TrendBaseline> {
  const m = await methodInfo(db, input.methodId);
  const rows = await repo.trendRows(db, input.methodId);
  const from = dayStart(input.from);
  const to = dayStart(input.to) + 86_400_000;
  const inside = rows.filter((r) => r.at.getTime() >= from && r.at.getTime() < to).length;
  if (inside < MIN_POINTS)
    throw unprocessable(
      'BASELINE_TOO_SHORT',
      `The period from ${input.from} to ${input.to} holds ${inside} passed result(s) of ${m.material_name} under method version ${m.version}; a baseline needs at least ${MIN_POINTS}. Choose a longer period.`,
      { points: inside, needed: MIN_POINTS },
    );
  if (to > Date.now() + 86_400_000)
    throw unprocessable('BASELINE_IN_FUTURE', 'A baseline period cannot end in the future.');
  await transactionWithRetry(db, async (trx) => {
    const [id] = await trx('trend_baseline').insert({
      material_id: m.material_id,
      method_id: m.id,
      period_from: new Date(from),
      period_to: new Date(to - 1),
      reason: input.reason,
      fixed_by: user.id,
      fixed_at: new Date(),
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'trend.baseline-fixed',
      entityType: 'trend_baseline',
      entityId: id,
      after: { material: m.material_name, methodVersion: m.version, from: input.from, to: input.to, points: inside },
      reason: input.reason,
      ip,
    });
  });
  return (await repo.latestBaseline(db, input.methodId))!;
}

let job: RunningJob | null = null;
/** The scan job: once per site under a lease (server/lib/lease.ts). */
export function startTrendJob(db: Knex, intervalMs = 10 * 60_000): RunningJob {
  job ??= startJob(db, { name: 'trend-scan', intervalMs, run: (d) => scanTrends(d) });
  return job;
}
export async function stopTrendJob(): Promise<void> {
  await job?.stop();
  job = null;
}

/**
 * The provenance rules of a measurement beside the copy lookup (docs/provenance.md):
 * who may add measurements to an attempt, what the file states about its acquisition and how
 * that is judged, Drumline record numbers named in the file's own title or sample identifier,
 * and the block of a container after too many invalid measurements.
 */
import type { Knex } from 'knex';
import type { Db } from '../../lib/db';
import { AppError, forbidden, unprocessable } from '../../lib/errors';
import type { StatedAcquisition } from '../../spectra';

// ---- who holds an attempt

/** The operator who may add measurements: the one who started it, or the last one it was handed over to. */
export async function holderOf(db: Db, test: { id: number; created_by: number }): Promise<number> {
  const h = await db('test_handover').where({ test_id: test.id }).orderBy('id', 'desc').first('to_user');
  return h ? h.to_user : test.created_by;
}

export async function assertHolder(db: Db, test: { id: number; created_by: number; attempt: number }, userId: number) {
  const holder = await holderOf(db, test);
  if (holder === userId) return;
  const u = await db('app_user').where({ id: holder }).first('full_name');
  throw forbidden(
    `Attempt ${test.attempt} is held by ${u?.full_name ?? 'another operator'}: only the operator who started it, or the one it was handed over to, may add measurements. Ask for the attempt to be handed over to you. Nothing was stored.`,
  );
}

// ---- acquisition stated by the file

/** UTC instant of a local date-time in an IANA time zone (two passes over the zone's offset). */
export function zonedToUtc(local: string, timeZone: string): Date {
  const asUtc = new Date(`${local}Z`).getTime();
  let t = asUtc;
  for (let i = 0; i < 2; i++) {
    const parts = new Intl.DateTimeFormat('en-GB', {
      timeZone,
      hourCycle: 'h23',
      year: 'numeric',
      month: '2-digit',
      day: '2-digit',
      hour: '2-digit',
      minute: '2-digit',
      second: '2-digit',
    }).formatToParts(new Date(t));
    const get = (k: string) => Number(parts.find((p) => p.type === k)?.value);
    const wall = Date.UTC(get('year'), get('month') - 1, get('day'), get('hour'), get('minute'), get('second'));
    t = asUtc - (wall - t);
  }
  return new Date(t);
}

export interface AcquisitionJudgement {
  acquiredText: string | null;
  acquiredAt: Date | null;
  acquiredJudgement: 'consistent' | 'not-stated' | 'unreadable';
  instrumentText: string | null;
  statedSerial: string | null;
  serialJudgement: 'matches' | 'not-stated' | 'no-serial-registered';
}

const normSerial = (s: string) => s.toUpperCase().replace(/[^A-Z0-9]/g, '');

/**
 * Judges what the file states: an acquisition time must lie after the instrument check the test
 * uses and not in the future (a date without a time: not before the check's day, not after
 * today); a serial must be the test instrument's serial when one is registered. Refuses (422)
 * a contradiction; what the file does not state is kept as "not stated" for the verifier.
 */
export function judgeAcquisition(
  stated: StatedAcquisition | undefined,
  ctx: {
    checkAt: Date;
    now: Date;
    timeZone: string;
    instrument: { name: string; serial_number: string | null };
    /** clock tolerance for "in the future" (site setting CLOCK_TOLERANCE_MINUTES; default 5 minutes) */
    futureToleranceMs?: number;
  },
): AcquisitionJudgement {
  const s = stated;
  const out: AcquisitionJudgement = {
    acquiredText: s?.whenText ?? null,
    acquiredAt: null,
    acquiredJudgement: !s?.whenText ? 'not-stated' : s.whenLocal ? 'consistent' : 'unreadable',
    instrumentText: s?.instrumentText ?? null,
    statedSerial: s?.serial ?? null,
    serialJudgement: s?.serial ? 'matches' : 'not-stated',
  };
  if (s?.whenLocal) {
    const at =
      s.utcOffsetMinutes !== null
        ? new Date(new Date(`${s.whenLocal}Z`).getTime() - s.utcOffsetMinutes * 60_000)
        : zonedToUtc(s.whenLocal, ctx.timeZone);
    out.acquiredAt = at;
    const slack = s.hasTime ? 0 : 24 * 3600_000; // a date alone covers its whole day
    const fmt = (d: Date) => d.toISOString().replace('T', ' ').slice(0, 16) + ' UTC';
    if (at.getTime() + slack < ctx.checkAt.getTime())
      throw unprocessable(
        'ACQUIRED_BEFORE_CHECK',
        `The file states it was acquired on ${s.whenText}, before the instrument check this test relies on (${fmt(ctx.checkAt)}). A spectrum measured before the check is not covered by it; measure the container again after the check. Nothing was stored.`,
      );
    if (at.getTime() - (s.hasTime ? (ctx.futureToleranceMs ?? 5 * 60_000) : 0) > ctx.now.getTime())
      throw unprocessable(
        'ACQUIRED_IN_FUTURE',
        `The file states it was acquired on ${s.whenText}, which lies in the future. The instrument clock or the export is wrong; correct it and measure again. Nothing was stored.`,
      );
  }
  if (s?.serial) {
    const registered = (ctx.instrument.serial_number ?? '').trim();
    if (!registered) out.serialJudgement = 'no-serial-registered';
    else if (normSerial(registered) !== normSerial(s.serial))
      throw unprocessable(
        'INSTRUMENT_SERIAL_MISMATCH',
        `The file states instrument serial ${s.serial}, but this test runs on ${ctx.instrument.name} (serial ${registered}). Upload the spectrum measured on the test's instrument, or change the test's instrument. Nothing was stored.`,
      );
  }
  return out;
}

// ---- Drumline record numbers named in the file

export interface IdentifierFinding {
  text: string;
  kind: 'container' | 'lot' | 'material';
  /** what the number belongs to, in words */
  belongsTo: string;
}

const CONTAINER_RE = /\bL-\d{4}-\d{5}-\d{3}(?!\d)/gi;
const LOT_RE = /\bL-\d{4}-\d{5}(?![\d])(?!-\d)/gi;
const escape = (s: string) => s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');

/**
 * Drumline record numbers in the file's title and sample identifier that belong to another record
 * than the container it is uploaded for: another container's label, another lot's number, another
 * material's code. A supplier's own lot number is not a Drumline number and is never a finding.
 */
export async function identifierFindings(
  db: Db,
  texts: (string | null | undefined)[],
  target: { label: string; lotNumber: string; materialCode: string },
): Promise<IdentifierFinding[]> {
  const text = texts.filter(Boolean).join(' \u2016 ');
  if (!text) return [];
  const out: IdentifierFinding[] = [];
  const seen = new Set<string>();
  const add = (f: IdentifierFinding) => {
    const k = `${f.kind}:${f.text.toUpperCase()}`;
    if (!seen.has(k)) {
      seen.add(k);
      out.push(f);
    }
  };
  for (const m of text.matchAll(CONTAINER_RE)) {
    const label = m[0].toUpperCase();
    if (label === target.label.toUpperCase()) continue;
    const c = await db('container as c')
      .join('lot as l', 'l.id', 'c.lot_id')
      .where('c.label', label)
      .first('l.lot_number');
    add({
      text: label,
      kind: 'container',
      belongsTo: c ? `container ${label} of lot ${c.lot_number}` : `container label ${label}, which no container has`,
    });
  }
  const withoutLabels = text.replace(CONTAINER_RE, ' ');
  for (const m of withoutLabels.matchAll(LOT_RE)) {
    const lot = m[0].toUpperCase();
    if (lot === target.lotNumber.toUpperCase()) continue;
    const l = await db('lot as l')
      .join('material as m', 'm.id', 'l.material_id')
      .where('l.lot_number', lot)
      .first('m.code');
    add({
      text: lot,
      kind: 'lot',
      belongsTo: l ? `lot ${lot} of material ${l.code}` : `lot number ${lot}, which no lot has`,
    });
  }
  const codes: { code: string; name: string }[] = await db('material').select('code', 'name');
  for (const m of codes) {
    if (m.code.toUpperCase() === target.materialCode.toUpperCase() || m.code.length < 3) continue;
    const re = new RegExp(`(^|[^A-Za-z0-9-])${escape(m.code)}(?![A-Za-z0-9])`, 'i');
    // the tested material's own code may contain another's (e.g. LAC-MH-200 holds MH-200): not a finding
    const own = new RegExp(`(^|[^A-Za-z0-9-])${escape(target.materialCode)}(?![A-Za-z0-9])`, 'i');
    if (re.test(text.replace(own, ' ')))
      add({ text: m.code, kind: 'material', belongsTo: `material ${m.code} (${m.name})` });
  }
  return out;
}

export function identifierRefusal(
  findings: IdentifierFinding[],
  target: { label: string },
  policy: 'confirm' | 'refuse',
) {
  const list = findings.map((f) => `"${f.text}" (${f.belongsTo})`).join('; ');
  return policy === 'refuse'
    ? new AppError(
        422,
        'FILE_NAMES_OTHER_RECORD',
        `The file's own title or sample identifier names another record than container ${target.label}: ${list}. This site refuses such files: measure container ${target.label} and export its spectrum with its own identifiers. Nothing was stored.`,
        { findings },
      )
    : new AppError(
        409,
        'CONFIRM_FILE_IDENTIFIERS',
        `The file's own title or sample identifier names another record than container ${target.label}: ${list}. Confirm that this spectrum was measured on container ${target.label} (the verifier will see this), or upload the right file. Nothing was stored.`,
        { findings },
      );
}

// ---- block after too many invalid measurements

export interface BlockState {
  blocked: boolean;
  /** invalid measurements since the last QA release (or since the start) */
  invalidSince: number;
  lastEventId: number | null;
}

export async function blockState(db: Db, containerId: number): Promise<BlockState> {
  const last = await db('container_block').where({ container_id: containerId }).orderBy('id', 'desc').first();
  const since = last?.event === 'released' ? new Date(last.created_at) : null;
  const q = db('measurement').where({ container_id: containerId, verdict: 'invalid' });
  if (since) q.where('created_at', '>', since);
  const n = Number((await q.count({ n: '*' }).first())?.n ?? 0);
  return { blocked: last?.event === 'blocked', invalidSince: n, lastEventId: last?.id ?? null };
}

export function blockedRefusal(label: string, limit: number): AppError {
  return new AppError(
    409,
    'CONTAINER_BLOCKED',
    `Container ${label} is blocked after ${limit} invalid measurements: QA has been told and decides how to go on. No further measurement can be added until QA releases it. Nothing was stored.`,
  );
}

export async function lockContainerBlocks(trx: Knex.Transaction, containerId: number) {
  return trx('container').where({ id: containerId }).forShare().first('id');
}

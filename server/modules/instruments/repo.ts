/** Data access of the instrument registry, check specifications and instrument checks. */
import { oneOf, parseJson, type Db } from '../../lib/db';
import type {
  AnyCheckResult,
  CheckBand,
  CheckLimits,
  CheckSpec,
  CheckType,
  Instrument,
  InstrumentCheck,
} from './contract';
import { CHECK_TYPES } from './contract';
import type { InstrumentCheckRow, InstrumentCheckSpecRow, InstrumentRow } from '../../lib/db-tables';

export type { InstrumentRow };
/** A check specification of an instrument (table instrument_check_spec). */
export type SpecRow = InstrumentCheckSpecRow;
/** A performed instrument check (table instrument_check). */
export type CheckRow = InstrumentCheckRow;

export const SERVICE_STATES = ['in-service', 'out-of-service'] as const;
const SPEC_STATUSES = ['draft', 'approved', 'superseded'] as const;
const VERDICTS = ['pass', 'fail'] as const;
export const checkTypeOf = (v: string): CheckType => oneOf(CHECK_TYPES, v, 'check type');
export const verdictOf = (v: string): 'pass' | 'fail' => oneOf(VERDICTS, v, 'check verdict');

import { iso } from '../../lib/dates';
export { iso };

export function toInstrument(r: InstrumentRow): Instrument {
  return {
    id: r.id,
    name: r.name,
    serialNumber: r.serial_number,
    technique: r.technique,
    sampling: r.sampling,
    location: r.location,
    checkValidityHours: r.check_validity_hours,
    active: !!r.active,
    serviceState: oneOf(SERVICE_STATES, r.service_state, 'service state'),
    createdBy: r.created_by,
    createdAt: iso(r.created_at)!,
    updatedAt: iso(r.updated_at)!,
  };
}

export function toSpec(r: SpecRow): CheckSpec {
  return {
    id: r.id,
    instrumentId: r.instrument_id,
    checkType: checkTypeOf(r.check_type),
    version: r.version,
    kind: r.kind,
    limits: parseJson<CheckLimits | null>(r.limits, null),
    bands: parseJson<CheckBand[]>(r.bands, []),
    justification: r.justification,
    status: oneOf(SPEC_STATUSES, r.status, 'specification status'),
    createdBy: r.created_by,
    createdAt: iso(r.created_at)!,
    approvedSignatureId: r.approved_signature_id,
  };
}

export function toCheck(r: CheckRow): InstrumentCheck {
  return {
    id: r.id,
    instrumentId: r.instrument_id,
    checkType: checkTypeOf(r.check_type),
    specId: r.spec_id,
    fileId: r.file_id,
    result: parseJson<AnyCheckResult>(r.result, null as unknown as AnyCheckResult),
    verdict: verdictOf(r.verdict),
    engineVersion: r.engine_version,
    performedBy: r.performed_by,
    performedAt: iso(r.performed_at)!,
    validUntil: iso(r.valid_until),
    signatureId: r.signature_id,
  };
}

export const findInstrument = async (db: Db, id: number): Promise<InstrumentRow | undefined> =>
  db('instrument').where({ id }).first();
export const approvedSpecOf = async (
  db: Db,
  instrumentId: number,
  checkType: CheckType = 'polystyrene',
): Promise<SpecRow | undefined> =>
  db('instrument_check_spec')
    .where({ instrument_id: instrumentId, status: 'approved', check_type: checkType })
    .orderBy('version', 'desc')
    .first();
export const specsOf = async (db: Db, instrumentId: number): Promise<SpecRow[]> =>
  db('instrument_check_spec').where({ instrument_id: instrumentId }).orderBy('version', 'desc');
export const checksOf = async (db: Db, instrumentId: number, limit = 200): Promise<CheckRow[]> =>
  db('instrument_check')
    .where({ instrument_id: instrumentId })
    .orderBy('performed_at', 'desc')
    .orderBy('id', 'desc')
    .limit(limit);

/** When the instrument last came back into service (checks before it no longer count), or null. */
export async function lastBackInService(db: Db, instrumentId: number, at: Date): Promise<Date | null> {
  const e = await db('instrument_service_event')
    .where({ instrument_id: instrumentId, state: 'in-service' })
    .andWhere('recorded_at', '<=', at)
    .orderBy('recorded_at', 'desc')
    .orderBy('id', 'desc')
    .first('recorded_at');
  return e ? new Date(e.recorded_at) : null;
}

/** The latest check of a type performed by `at`. */
export const latestCheckOf = async (
  db: Db,
  instrumentId: number,
  checkType: CheckType,
  at: Date,
): Promise<CheckRow | undefined> =>
  db('instrument_check')
    .where({ instrument_id: instrumentId, check_type: checkType })
    .andWhere('performed_at', '<=', at)
    .orderBy('performed_at', 'desc')
    .orderBy('id', 'desc')
    .first();

/**
 * The instrument's valid check of a type at `at`: its latest check of that type performed by
 * then, if that check passed, its validity has not ended, and it was performed after the
 * instrument last came back into service. A failed check after a passing one makes the
 * instrument "check due" at once (a failing check casts doubt on it).
 */
export async function validCheckOf(
  db: Db,
  instrumentId: number,
  at: Date,
  checkType: CheckType = 'polystyrene',
): Promise<CheckRow | undefined> {
  const latest = await latestCheckOf(db, instrumentId, checkType, at);
  if (
    !latest ||
    latest.verdict !== 'pass' ||
    !latest.valid_until ||
    new Date(latest.valid_until).getTime() <= at.getTime()
  )
    return undefined;
  const back = await lastBackInService(db, instrumentId, at);
  if (back && new Date(latest.performed_at).getTime() < back.getTime()) return undefined;
  return latest;
}

/**
 * The check types an instrument requires: the wavenumber check (polystyrene) for every mid-IR
 * instrument, and every check type for which QA has approved limits on this instrument (QA
 * decides which further checks apply by approving their limits; an approval cannot be withdrawn
 * except by a new approved version, so the requirement stays).
 */
export async function requiredCheckTypes(db: Db, inst: { id: number; technique: string }): Promise<CheckType[]> {
  const rows = await db('instrument_check_spec')
    .where({ instrument_id: inst.id })
    .whereIn('status', ['approved', 'superseded'])
    .distinct('check_type');
  const types = new Set<CheckType>(rows.map((r) => checkTypeOf(r.check_type)));
  if (inst.technique === 'mid-ir') types.add('polystyrene');
  const order: CheckType[] = ['polystyrene', 'atr-blank', 'noise', 'nir-wavelength', 'nir-photometric-noise'];
  return order.filter((t) => types.has(t));
}

/** Data access of the instrument registry, check specifications and instrument checks. */
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';
import type {
  AnyCheckResult,
  CheckBand,
  CheckLimits,
  CheckSpec,
  CheckType,
  Instrument,
  InstrumentCheck,
} from './contract';

export interface InstrumentRow {
  id: number;
  name: string;
  serial_number: string;
  technique: string;
  sampling: string;
  location: string;
  check_validity_hours: number;
  active: number;
  service_state: 'in-service' | 'out-of-service';
  created_by: number;
  created_at: Date;
  updated_at: Date;
}

export interface SpecRow {
  id: number;
  instrument_id: number;
  check_type: CheckType;
  limits: string | null;
  version: number;
  kind: string;
  bands: string;
  justification: string | null;
  status: 'draft' | 'approved' | 'superseded';
  created_by: number;
  created_at: Date;
  approved_signature_id: number | null;
}

export interface CheckRow {
  id: number;
  instrument_id: number;
  check_type: CheckType;
  spec_id: number;
  file_id: number;
  result: string;
  verdict: 'pass' | 'fail';
  engine_version: string;
  performed_by: number;
  performed_at: Date;
  valid_until: Date | null;
  signature_id: number | null;
}

export const iso = (d: Date | null | undefined): string | null => (d ? new Date(d).toISOString() : null);

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
    serviceState: r.service_state,
    createdBy: r.created_by,
    createdAt: iso(r.created_at)!,
    updatedAt: iso(r.updated_at)!,
  };
}

export function toSpec(r: SpecRow): CheckSpec {
  return {
    id: r.id,
    instrumentId: r.instrument_id,
    checkType: r.check_type,
    version: r.version,
    kind: r.kind,
    limits: parseJson<CheckLimits | null>(r.limits, null),
    bands: parseJson<CheckBand[]>(r.bands, []),
    justification: r.justification,
    status: r.status,
    createdBy: r.created_by,
    createdAt: iso(r.created_at)!,
    approvedSignatureId: r.approved_signature_id,
  };
}

export function toCheck(r: CheckRow): InstrumentCheck {
  return {
    id: r.id,
    instrumentId: r.instrument_id,
    checkType: r.check_type,
    specId: r.spec_id,
    fileId: r.file_id,
    result: parseJson<AnyCheckResult>(r.result, null as unknown as AnyCheckResult),
    verdict: r.verdict,
    engineVersion: r.engine_version,
    performedBy: r.performed_by,
    performedAt: iso(r.performed_at)!,
    validUntil: iso(r.valid_until),
    signatureId: r.signature_id,
  };
}

export const findInstrument = (db: Db, id: number): Promise<InstrumentRow | undefined> =>
  db('instrument').where({ id }).first();
export const approvedSpecOf = (
  db: Db,
  instrumentId: number,
  checkType: CheckType = 'polystyrene',
): Promise<SpecRow | undefined> =>
  db('instrument_check_spec')
    .where({ instrument_id: instrumentId, status: 'approved', check_type: checkType })
    .orderBy('version', 'desc')
    .first();
export const specsOf = (db: Db, instrumentId: number): Promise<SpecRow[]> =>
  db('instrument_check_spec').where({ instrument_id: instrumentId }).orderBy('version', 'desc');
export const checksOf = (db: Db, instrumentId: number, limit = 200): Promise<CheckRow[]> =>
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
export const latestCheckOf = (
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
  const rows: { check_type: CheckType }[] = await db('instrument_check_spec')
    .where({ instrument_id: inst.id })
    .whereIn('status', ['approved', 'superseded'])
    .distinct('check_type');
  const types = new Set<CheckType>(rows.map((r) => r.check_type));
  if (inst.technique === 'mid-ir') types.add('polystyrene');
  const order: CheckType[] = ['polystyrene', 'atr-blank', 'noise', 'nir-wavelength', 'nir-photometric-noise'];
  return order.filter((t) => types.has(t));
}

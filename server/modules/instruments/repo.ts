/** Data access of the instrument registry, check specifications and instrument checks. */
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';
import type { CheckBand, CheckResult, CheckSpec, Instrument, InstrumentCheck } from './contract';

export interface InstrumentRow {
  id: number;
  name: string;
  serial_number: string;
  technique: string;
  sampling: string;
  location: string;
  check_validity_hours: number;
  active: number;
  created_by: number;
  created_at: Date;
  updated_at: Date;
}

export interface SpecRow {
  id: number;
  instrument_id: number;
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
    createdBy: r.created_by,
    createdAt: iso(r.created_at)!,
    updatedAt: iso(r.updated_at)!,
  };
}

export function toSpec(r: SpecRow): CheckSpec {
  return {
    id: r.id,
    instrumentId: r.instrument_id,
    version: r.version,
    kind: r.kind,
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
    specId: r.spec_id,
    fileId: r.file_id,
    result: parseJson<CheckResult>(r.result, null as unknown as CheckResult),
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
export const approvedSpecOf = (db: Db, instrumentId: number): Promise<SpecRow | undefined> =>
  db('instrument_check_spec')
    .where({ instrument_id: instrumentId, status: 'approved' })
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

/**
 * The instrument's valid check at `at`: its latest check performed by then, if that check
 * passed and its validity has not ended. A failed check after a passing one makes the
 * instrument "check due" at once (a failing wavenumber scale casts doubt on it).
 */
export async function validCheckOf(db: Db, instrumentId: number, at: Date): Promise<CheckRow | undefined> {
  const latest: CheckRow | undefined = await db('instrument_check')
    .where({ instrument_id: instrumentId })
    .andWhere('performed_at', '<=', at)
    .orderBy('performed_at', 'desc')
    .orderBy('id', 'desc')
    .first();
  if (
    !latest ||
    latest.verdict !== 'pass' ||
    !latest.valid_until ||
    new Date(latest.valid_until).getTime() <= at.getTime()
  )
    return undefined;
  return latest;
}

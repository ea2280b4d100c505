/**
 * Whether an instrument may be used for an identity test right now (DESIGN.md flow 1):
 * active, and its LATEST instrument check passed and has not expired. A later failing check
 * overrides an earlier passing one. The instrument's technique and sampling must also fit the
 * identity method (an ATR method needs a mid-IR ATR instrument).
 * The decision is the instruments module's getValidInstrumentCheck; this file adds the
 * operator's sentence for why an instrument may not be used.
 */
import type { Knex } from 'knex';
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';
import { getValidInstrumentCheck } from '../instruments';
import type { CitedInstrumentCheck, InstrumentStatus } from './contract';

/** An instrument check with its stored result, as the testing module reads it. */
export type InstrumentCheckInfo = CitedInstrumentCheck & { result: unknown };

export function toCheckInfo(r: Record<string, unknown>): InstrumentCheckInfo {
  return {
    id: Number(r.id),
    specId: Number(r.spec_id),
    verdict: r.verdict as 'pass' | 'fail',
    performedAt: new Date(r.performed_at as string).toISOString(),
    validUntil: r.valid_until ? new Date(r.valid_until as string).toISOString() : null,
    performedBy: Number(r.performed_by),
    engineVersion: String(r.engine_version),
    result: parseJson<unknown>(r.result, null),
  };
}

export async function instrumentStatus(
  db: Db,
  instrumentId: number,
  at = new Date(),
): Promise<InstrumentStatus | null> {
  const i = await db('instrument').where({ id: instrumentId }).first();
  if (!i) return null;
  const latest = await db('instrument_check')
    .where({ instrument_id: instrumentId })
    .andWhere('performed_at', '<=', at)
    .orderBy('performed_at', 'desc')
    .orderBy('id', 'desc')
    .first();
  const instrument = {
    id: i.id as number,
    name: i.name as string,
    serialNumber: i.serial_number as string,
    technique: i.technique as string,
    sampling: i.sampling as string,
    location: i.location as string,
    active: !!i.active,
  };
  const check = latest ? toCheckInfo(latest) : null;
  const valid = await getValidInstrumentCheck(instrumentId, at, db as Knex);
  let reason: string | null = null;
  if (!instrument.active) reason = `Instrument ${instrument.name} is out of service. Choose another instrument.`;
  else if (!check)
    reason = `Instrument ${instrument.name} has no instrument check on record. Run the polystyrene wavenumber check first.`;
  else if (check.verdict !== 'pass')
    reason = `The last instrument check of ${instrument.name} failed. The instrument may not be used until a new check passes.`;
  else if (!check.validUntil || new Date(check.validUntil).getTime() <= at.getTime())
    reason = `The instrument check of ${instrument.name} is due (it expired ${check.validUntil ?? 'at once'}). Run the polystyrene wavenumber check before testing.`;
  if (!reason && !valid)
    reason = `Instrument ${instrument.name} has no valid instrument check. Run the polystyrene wavenumber check before testing.`;
  if (valid && reason) reason = null;
  return { instrument, check, usable: reason === null, reason };
}

/** The instrument technique and sampling that fit an identity method technique. */
export function fitsMethod(instrument: { technique: string; sampling: string }, methodTechnique: string): boolean {
  switch (methodTechnique) {
    case 'mid-ir-atr':
      return instrument.technique === 'mid-ir' && instrument.sampling === 'atr';
    case 'mid-ir-transmission':
      return instrument.technique === 'mid-ir' && instrument.sampling === 'transmission';
    case 'nir':
      return instrument.technique === 'nir';
    default:
      return false;
  }
}

/** Active instruments with their usability, for the instrument picker. */
export async function listInstrumentStatuses(db: Db): Promise<InstrumentStatus[]> {
  const rows = await db('instrument').where({ active: 1 }).orderBy('name').select('id');
  const out: InstrumentStatus[] = [];
  for (const r of rows) {
    const s = await instrumentStatus(db, r.id as number);
    if (s) out.push(s);
  }
  return out;
}

/**
 * Whether an instrument may be used for an identity test right now (docs/architecture.md, "The identity flow"):
 * in use and in service, and for EVERY required check type (the wavenumber check of a mid-IR
 * instrument, and each type whose limits QA approved: ATR blank, noise, NIR wavelength accuracy,
 * NIR photometric noise) the LATEST check passed, has not expired and was made after the
 * instrument last came back into service. A later failing check overrides an earlier passing one. The instrument's technique and sampling must also fit the
 * identity method (an ATR method needs a mid-IR ATR instrument).
 * The decision is the instruments module's getValidInstrumentCheck; this file adds the
 * operator's sentence for why an instrument may not be used.
 */
import type { Knex } from 'knex';
import type { Db } from '../../lib/db';
import { must, parseJson } from '../../lib/db';
import type { InstrumentCheckRow } from '../../lib/db-tables';
import { oneOf } from '../../lib/db';
import { getValidInstrumentCheck, requiredCheckTypes, unusableReason } from '../instruments';
import type { CitedInstrumentCheck, InstrumentStatus } from './contract';

/** An instrument check with its stored result, as the testing module reads it. */
export type InstrumentCheckInfo = CitedInstrumentCheck & { result: unknown };

export function toCheckInfo(r: InstrumentCheckRow): InstrumentCheckInfo {
  return {
    id: r.id,
    specId: r.spec_id,
    verdict: oneOf(CHECK_VERDICTS, r.verdict, 'check verdict'),
    performedAt: new Date(r.performed_at).toISOString(),
    validUntil: r.valid_until ? new Date(r.valid_until).toISOString() : null,
    performedBy: r.performed_by,
    engineVersion: r.engine_version,
    result: parseJson<unknown>(r.result, null),
  };
}
const CHECK_VERDICTS = ['pass', 'fail'] as const;

export async function instrumentStatus(
  db: Db,
  instrumentId: number,
  at = new Date(),
): Promise<InstrumentStatus | null> {
  const i = await db('instrument').where({ id: instrumentId }).first();
  if (!i) return null;
  // The check a measurement cites: the latest of the first required type (the wavenumber check).
  const primaryType = (await requiredCheckTypes(db, i))[0] ?? 'polystyrene';
  const latest = await db('instrument_check')
    .where({ instrument_id: instrumentId, check_type: primaryType })
    .andWhere('performed_at', '<=', at)
    .orderBy('performed_at', 'desc')
    .orderBy('id', 'desc')
    .first();
  const instrument = {
    id: i.id,
    name: i.name,
    serialNumber: i.serial_number,
    technique: i.technique,
    sampling: i.sampling,
    location: i.location,
    active: !!i.active && i.service_state !== 'out-of-service',
  };
  const valid = await getValidInstrumentCheck(instrumentId, at, db as Knex);
  const reason = valid
    ? null
    : ((await unusableReason(db, i, at)) ?? `Instrument ${instrument.name} has no valid instrument check.`);
  // The cited check is the one getValidInstrumentCheck names when the instrument is usable.
  const check = valid
    ? toCheckInfo(must(await db('instrument_check').where({ id: valid.id }).first(), `instrument check ${valid.id}`))
    : latest
      ? toCheckInfo(latest)
      : null;
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
    const s = await instrumentStatus(db, r.id);
    if (s) out.push(s);
  }
  return out;
}

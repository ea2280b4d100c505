/**
 * The copy lookup (docs/provenance.md): is an uploaded spectrum one that the site already holds
 * as a measurement, a reference or an instrument check? Three rules, in order:
 * 1. the same raw bytes (SHA-256 of the file; also finds files stored before fingerprints existed);
 * 2. the same decoded values (SHA-256 of x and y after reading: another header, same numbers);
 * 3. a re-export of the same acquisition (the engine's sameAcquisition: the difference is within
 *    rounding or far below the noise of both), looked for only among the stored spectra whose
 *    fingerprint lies in the lookup window (an indexed range, never a scan of every spectrum).
 * A copy is refused with 422 and a sentence naming where the spectrum was used before.
 */
import type { Knex } from 'knex';
import type { Db } from '../../lib/db';
import type { SpectrumFingerprintRow } from '../../lib/db-tables';
import { AppError } from '../../lib/errors';
import { COPY_RATIO_LIMIT, lookupWindow, sameAcquisition, type Spectrum } from '../../spectra';
import { readSpectrumOff } from '../../workers/pool';
import type { ProvenanceKeys } from '../../workers/tasks';

export type RecordType = 'measurement' | 'reference' | 'instrument-check';

export interface FoundCopy {
  rule: 'raw-bytes' | 'decoded-values' | 're-export';
  recordType: RecordType;
  recordId: number;
  where: string;
  detail?: string;
}

/** Where a stored spectrum is used, in words ("container L-2026-00007-003 of lot L-2026-00007 ..."). */
export async function describeUse(db: Db, recordType: RecordType, recordId: number): Promise<string> {
  if (recordType === 'measurement') {
    const r = await db('measurement as ms')
      .join('container as c', 'c.id', 'ms.container_id')
      .join('lot as l', 'l.id', 'c.lot_id')
      .join('material as m', 'm.id', 'l.material_id')
      .where('ms.id', recordId)
      .first('c.label', 'l.lot_number', 'm.code', 'ms.id');
    return r
      ? `the measurement of container ${r.label} of lot ${r.lot_number} (material ${r.code}, measurement ${r.id})`
      : `measurement ${recordId}`;
  }
  if (recordType === 'reference') {
    const r = await db('reference_spectrum as r')
      .join('material as m', 'm.id', 'r.material_id')
      .where('r.id', recordId)
      .first('r.code', 'm.code as mcode', 'm.name');
    return r ? `reference ${r.code} of material ${r.mcode} (${r.name})` : `reference ${recordId}`;
  }
  const r = await db('instrument_check as k')
    .join('instrument as i', 'i.id', 'k.instrument_id')
    .where('k.id', recordId)
    .first('i.name', 'i.serial_number', 'k.id');
  return r
    ? `the instrument check ${r.id} of instrument ${r.name} (serial ${r.serial_number})`
    : `instrument check ${recordId}`;
}

/** Records that use a stored file with these raw bytes (files stored before fingerprints too). */
async function usesOfRawBytes(db: Db, sha256: string): Promise<{ recordType: RecordType; recordId: number }[]> {
  const files = (await db('stored_file').where({ sha256 }).select('id')).map((r) => r.id);
  if (!files.length) return [];
  const out: { recordType: RecordType; recordId: number }[] = [];
  for (const r of await db('measurement').whereIn('file_id', files).select('id').orderBy('id'))
    out.push({ recordType: 'measurement', recordId: r.id });
  for (const r of await db('reference_spectrum').whereIn('file_id', files).select('id').orderBy('id'))
    out.push({ recordType: 'reference', recordId: r.id });
  for (const r of await db('instrument_check').whereIn('file_id', files).select('id').orderBy('id'))
    out.push({ recordType: 'instrument-check', recordId: r.id });
  return out;
}

/** A fingerprint as read here: its record_type text column holds RecordType values (recordFingerprint writes only those). */
type FingerprintRow = Pick<SpectrumFingerprintRow, 'id' | 'file_id' | 'record_id' | 'noise' | 'y_step'> & {
  record_type: RecordType;
};
type FingerprintUse = Pick<FingerprintRow, 'record_type' | 'record_id'>;

/** Stored spectra whose fingerprint lies in the lookup window of this one (indexed on seg1). */
export function candidatesQuery(db: Db, keys: ProvenanceKeys) {
  const w = lookupWindow(keys.fingerprint, keys.yStep);
  return db('spectrum_fingerprint')
    .whereBetween('seg1', [w.segments[0][0], w.segments[0][1]])
    .whereBetween('seg2', [w.segments[1][0], w.segments[1][1]])
    .whereBetween('seg3', [w.segments[2][0], w.segments[2][1]])
    .whereBetween('seg4', [w.segments[3][0], w.segments[3][1]])
    .whereBetween('points', [w.points[0], w.points[1]])
    .whereBetween('x_low', [w.xLow[0], w.xLow[1]])
    .whereBetween('x_high', [w.xHigh[0], w.xHigh[1]])
    .select<FingerprintRow[]>('id', 'file_id', 'record_type', 'record_id', 'noise', 'y_step')
    .orderBy('id')
    .limit(200);
}

/** The first stored spectrum this upload copies, or null. Reads candidate files in the compute pool. */
export async function findCopy(
  db: Db,
  sha256: string,
  spectrum: Spectrum,
  keys: ProvenanceKeys,
): Promise<FoundCopy | null> {
  const raw = await usesOfRawBytes(db, sha256);
  if (raw.length) {
    const u = raw[0];
    return { rule: 'raw-bytes', ...u, where: await describeUse(db, u.recordType, u.recordId) };
  }
  const same = await db('spectrum_fingerprint')
    .where({ decoded_sha256: keys.decodedSha256 })
    .orderBy('id')
    .first<FingerprintUse | undefined>('record_type', 'record_id');
  if (same)
    return {
      rule: 'decoded-values',
      recordType: same.record_type,
      recordId: same.record_id,
      where: await describeUse(db, same.record_type, same.record_id),
    };
  const rows = await candidatesQuery(db, keys);
  for (const c of rows) {
    const f = await db('stored_file').where({ id: c.file_id }).first('data', 'file_name');
    if (!f) continue;
    let stored: Spectrum;
    try {
      stored = await readSpectrumOff(new Uint8Array(f.data), f.file_name);
    } catch {
      continue; // a stored file that no longer reads is the integrity sweep's finding, not a copy
    }
    const cmp = sameAcquisition(stored, spectrum);
    if (cmp.copy)
      return {
        rule: 're-export',
        recordType: c.record_type,
        recordId: c.record_id,
        where: await describeUse(db, c.record_type, c.record_id),
        detail:
          cmp.rule === 'rounding'
            ? `every point agrees with it to within the rounding of the two files (largest difference ${cmp.maxDifference.toExponential(2)})`
            : cmp.rule === 'moved' && cmp.alignment
              ? `moved by ${cmp.alignment.offset.toFixed(3)} cm-1 and scaled by ${cmp.alignment.beta.toFixed(4)}, it differs from it by ${cmp.alignment.ratio.toFixed(3)} times the noise (below ${COPY_RATIO_LIMIT}; two real scans differ by more than the noise)`
              : `it differs from it by ${cmp.ratio.toFixed(3)} times the noise of the two spectra (below ${COPY_RATIO_LIMIT}; two real scans differ by more than the noise)`,
      };
  }
  return null;
}

/** The refusal of a copy: 422 with a sentence naming where the spectrum was used before. */
export function copyRefusal(found: FoundCopy, what: string): AppError {
  const how =
    found.rule === 'raw-bytes'
      ? `This file is byte for byte the file already stored as ${found.where}.`
      : found.rule === 'decoded-values'
        ? `This file holds the same spectrum (the same x and y values) as ${found.where}.`
        : `This spectrum is a re-export of the acquisition already stored as ${found.where}: ${found.detail}.`;
  return new AppError(
    422,
    'SPECTRUM_ALREADY_USED',
    `${how} Two real acquisitions always differ in their noise, so this is a copy and cannot be ${what}. Measure again and upload the new file. Nothing was stored.`,
    { rule: found.rule, recordType: found.recordType, recordId: found.recordId },
  );
}

/** Writes the fingerprint of a stored spectrum (in the caller's transaction). */
export async function recordFingerprint(
  trx: Knex.Transaction | Knex,
  row: { fileId: number; recordType: RecordType; recordId: number; sha256: string; keys: ProvenanceKeys; at: Date },
): Promise<void> {
  const fp = row.keys.fingerprint;
  await trx('spectrum_fingerprint').insert({
    file_id: row.fileId,
    record_type: row.recordType,
    record_id: row.recordId,
    raw_sha256: row.sha256,
    decoded_sha256: row.keys.decodedSha256,
    points: fp.points,
    x_low: fp.xLow,
    x_high: fp.xHigh,
    seg1: fp.segments[0],
    seg2: fp.segments[1],
    seg3: fp.segments[2],
    seg4: fp.segments[3],
    noise: fp.noise,
    y_range: fp.yRange,
    y_step: row.keys.yStep,
    created_at: row.at,
  });
}

/**
 * Inside the storing transaction: locks the index entries of these raw bytes and decoded values
 * (next-key locks on the two SHA-256 indexes), so that two uploads of the same file at the same
 * moment cannot both pass the lookup; the second waits and then finds the first.
 */
export async function lockAndRecheck(trx: Knex.Transaction, sha256: string, keys: ProvenanceKeys): Promise<void> {
  const hit =
    (await trx('spectrum_fingerprint')
      .where({ raw_sha256: sha256 })
      .forUpdate()
      .first<FingerprintUse | undefined>('record_type', 'record_id')) ??
    (await trx('spectrum_fingerprint')
      .where({ decoded_sha256: keys.decodedSha256 })
      .forUpdate()
      .first<FingerprintUse | undefined>('record_type', 'record_id'));
  if (hit) {
    const where = await describeUse(trx, hit.record_type, hit.record_id);
    throw copyRefusal(
      { rule: 'decoded-values', recordType: hit.record_type, recordId: hit.record_id, where },
      'stored',
    );
  }
}

/**
 * An approved identity library for testing lots WITHOUT the library workflow: approved
 * materials (approved identity method, approved references) and instruments with a passing,
 * expired or failed instrument check, written straight into the tables. Used by the API tests
 * of testing (tests/api/fixtures-testing.ts) and the browser tests (scripts/e2e-seed-library.ts),
 * which need a ready library and must not depend on the library's own approval rules.
 * NOT for a real site: there, QA approves methods and references through Drumline.
 *
 * The science stays real: references are real spectra from ../shared/reference-data, their
 * bands are picked by the engine, and the instrument check is the engine's polystyrene check of
 * the real film spectrum (against site ATR positions taken from that film; under the Ph. Eur.
 * 2.2.24 FT positions this ATR film fails, as the engine tests show).
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Knex } from 'knex';
import { repoRoot } from '../config';
import { sha256Hex } from '../../server/lib/canonical';
import { contentHash } from '../../server/lib/esign';
import { must } from '../../server/lib/db';
import { methodSignedContent, pickBands, referenceSignedContent } from '../../server/modules/library';
import { provenanceKeys, recordFingerprint } from '../../server/modules/provenance';
import {
  checkPolystyrene,
  defaultMidIrAtrMethod,
  estimateNoise,
  type IdentityMethod,
  PH_EUR_POLYSTYRENE_FT,
  readSpectrum,
} from '../../server/spectra';

export const REFERENCE_DATA = path.resolve(repoRoot, '../shared/reference-data');

export interface SeedUser {
  id: number;
  fullName: string;
}

export function dataFile(rel: string): { buffer: Buffer; name: string } {
  const p = path.join(REFERENCE_DATA, rel);
  return { buffer: fs.readFileSync(p), name: path.basename(p) };
}

let acquisitions = 0;

/**
 * A new acquisition of the sample of a real file: its spectrum (read by the engine) with fresh
 * noise added at the file's own noise level (the engine's second-difference estimate), written
 * as CSV in absorbance. Two real scans of one sample differ in their noise, and Drumline refuses
 * a second upload of the same acquisition (docs/provenance.md), so every sample a test uploads
 * is made this way; the spectrum keeps its bands, so it scores like the file it comes from.
 */
export function distinctAcquisition(rel: string, fileName?: string): { buffer: Buffer; name: string } {
  const f = dataFile(rel);
  const s = readSpectrum(new Uint8Array(f.buffer), f.name, { xUnits: 'cm-1' });
  const sigma = Math.max(estimateNoise(s.y), 1e-6);
  let seed = (Date.now() ^ (process.pid << 8) ^ (++acquisitions * 2654435761)) >>> 0;
  const uniform = () => {
    seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0;
    return (seed + 0.5) / 4294967296;
  };
  const lines = ['wavenumber_cm-1,absorbance'];
  for (let i = 0; i < s.x.length; i++) {
    const g = Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
    lines.push(`${s.x[i]},${s.y[i] + sigma * g}`);
  }
  return { buffer: Buffer.from(`${lines.join('\n')}\n`, 'utf8'), name: fileName ?? f.name };
}

async function storeFile(k: Knex, rel: string, userId: number): Promise<number> {
  const f = dataFile(rel);
  const [id] = await k('stored_file').insert({
    sha256: sha256Hex(f.buffer),
    file_name: f.name,
    media_type: 'text/csv',
    size: f.buffer.length,
    data: f.buffer,
    uploaded_by: userId,
    uploaded_at: new Date(),
  });
  return id;
}

/** A signature row over the content the application signs, so the integrity sweep finds it intact. */
async function signatureRow(
  k: Knex,
  user: SeedUser,
  meaning: string,
  entityType: string,
  entityId: number,
  content: unknown,
): Promise<number> {
  const [id] = await k('e_signature').insert({
    user_id: user.id,
    printed_name: user.fullName,
    meaning,
    entity_type: entityType,
    entity_id: String(entityId),
    content_hash: contentHash(content),
    statement: 'seeded approved library (tests only)',
    signed_at: new Date(),
  });
  return id;
}

export interface SeededMaterial {
  materialId: number;
  code: string;
  name: string;
  methodId: number;
  referenceIds: number[];
}

/**
 * `qa` approves; `opts.author` wrote the method version and uploaded the references (the author of a
 * method version never approves it, and the database refuses it: db/migrations/110_method_control.ts).
 */
export async function seedApprovedMaterial(
  k: Knex,
  qa: SeedUser,
  opts: {
    code: string;
    name: string;
    grade?: string;
    referenceFiles: string[];
    method?: IdentityMethod;
    author: SeedUser;
  },
): Promise<SeededMaterial> {
  const method = opts.method ?? defaultMidIrAtrMethod;
  const now = new Date();
  const [materialId] = await k('material').insert({
    code: opts.code,
    name: opts.name,
    grade: opts.grade ?? 'fixture grade',
    monograph_ref: '',
    techniques: JSON.stringify([method.technique]),
    notes: null,
    active: 1,
    created_by: qa.id,
    created_at: now,
    updated_at: now,
  });
  const status = 'approved' as const;
  const [methodId] = await k('identity_method').insert({
    material_id: materialId,
    version: 1,
    status,
    technique: method.technique,
    params: JSON.stringify(method),
    change_note: 'seeded',
    supersedes_id: null,
    created_by: opts.author.id,
    created_at: now,
    updated_at: now,
    approved_signature_id: null,
    approved_at: now,
  });
  await k('identity_method')
    .where({ id: methodId })
    .update({
      approved_signature_id: await signatureRow(
        k,
        qa,
        'approved',
        'identity_method',
        methodId,
        // the version inserted just above, with the status it was inserted with
        methodSignedContent({
          ...must(await k('identity_method').where({ id: methodId }).first(), `Method version ${methodId}`),
          status,
        }),
      ),
    });
  const referenceIds: number[] = [];
  for (const [i, rel] of opts.referenceFiles.entries()) {
    const fileId = await storeFile(k, rel, opts.author.id);
    const f = dataFile(rel);
    const refSpectrum = readSpectrum(new Uint8Array(f.buffer), f.name);
    const bands = pickBands(refSpectrum, method);
    const [refId] = await k('reference_spectrum').insert({
      material_id: materialId,
      code: `REF-${opts.code}-${i + 1}`,
      file_id: fileId,
      status: 'approved',
      technique: method.technique,
      supplier: 'seed',
      supplier_lot: `S${i + 1}`,
      measured_how: rel,
      instrument_id: null,
      bands: JSON.stringify(bands),
      meta: null,
      specificity: null,
      justification: null,
      created_by: opts.author.id,
      created_at: now,
      updated_at: now,
      approved_signature_id: null,
      approved_method_id: methodId,
      approved_at: now,
      retired_signature_id: null,
      retire_reason: null,
    });
    await k('reference_spectrum')
      .where({ id: refId })
      .update({
        approved_signature_id: await signatureRow(
          k,
          qa,
          'approved',
          'reference_spectrum',
          refId,
          referenceSignedContent(refId, sha256Hex(f.buffer), JSON.parse(JSON.stringify(bands)), methodId),
        ),
      });
    await recordFingerprint(k, {
      fileId,
      recordType: 'reference',
      recordId: refId,
      sha256: sha256Hex(f.buffer),
      keys: provenanceKeys(refSpectrum),
      at: now,
    });
    referenceIds.push(refId);
  }
  return {
    materialId: materialId,
    code: opts.code,
    name: opts.name,
    methodId: methodId,
    referenceIds,
  };
}

export type CheckState = 'valid' | 'expired' | 'failed' | 'none';

export async function seedInstrument(
  k: Knex,
  qa: SeedUser,
  opts: {
    name: string;
    state: CheckState;
    technique?: string;
    sampling?: string;
    location?: string;
    /** a passing check that expires at this time (a recorded check never changes, so expiry is set up front) */
    validUntil?: Date;
  },
): Promise<{ instrumentId: number; checkId: number | null; name: string }> {
  const now = new Date();
  const [instrumentId] = await k('instrument').insert({
    name: opts.name,
    serial_number: 'SN-' + opts.name,
    technique: opts.technique ?? 'mid-ir',
    sampling: opts.sampling ?? 'atr',
    location: opts.location ?? 'Goods-in lab',
    check_validity_hours: 24,
    active: 1,
    created_by: qa.id,
    created_at: now,
    updated_at: now,
  });
  const film = dataFile('atr-ftir/polystyrene_film.csv');
  const spectrum = readSpectrum(new Uint8Array(film.buffer), film.name);
  const ft = checkPolystyrene(spectrum, { spec: PH_EUR_POLYSTYRENE_FT, mode: 'atr' });
  const siteSpec = {
    name: 'Site ATR positions (seed)',
    instrument: 'ft' as const,
    bands: ft.bands.map((b) => ({ nominal: Math.round((b.found ?? b.nominal) * 10) / 10, tolerance: 1.0 })),
  };
  const [specId] = await k('instrument_check_spec').insert({
    instrument_id: instrumentId,
    version: 1,
    kind: 'site',
    bands: JSON.stringify(siteSpec.bands),
    justification: 'ATR positions of the site polystyrene film (seed)',
    status: 'approved',
    created_by: qa.id,
    created_at: now,
    approved_signature_id: null,
  });
  if (opts.state === 'none') return { instrumentId: instrumentId, checkId: null, name: opts.name };
  const result = opts.state === 'failed' ? ft : checkPolystyrene(spectrum, { spec: siteSpec, mode: 'atr' });
  const fileId = await storeFile(k, 'atr-ftir/polystyrene_film.csv', qa.id);
  const performedAt =
    opts.state === 'expired' ? new Date(now.getTime() - 30 * 3600_000) : new Date(now.getTime() - 60_000);
  const [checkId] = await k('instrument_check').insert({
    instrument_id: instrumentId,
    spec_id: specId,
    file_id: fileId,
    result: JSON.stringify(result),
    verdict: result.verdict,
    engine_version: result.engineVersion,
    performed_by: qa.id,
    performed_at: performedAt,
    valid_until:
      result.verdict === 'pass' ? (opts.validUntil ?? new Date(performedAt.getTime() + 24 * 3600_000)) : null,
    signature_id: null,
  });
  await recordFingerprint(k, {
    fileId,
    recordType: 'instrument-check',
    recordId: checkId,
    sha256: sha256Hex(dataFile('atr-ftir/polystyrene_film.csv').buffer),
    keys: provenanceKeys(spectrum),
    at: performedAt,
  });
  return { instrumentId: instrumentId, checkId: checkId, name: opts.name };
}

/** Real fibre spectra (../shared/reference-data/atr-ftir-fibres) used by the testing tests. */
export const FIBRES = {
  nylon66Reference: 'atr-ftir-fibres/nylon66_s091_r1.csv',
  nylon66Samples: [
    'atr-ftir-fibres/nylon66_s091_r2.csv',
    'atr-ftir-fibres/nylon66_s090.csv',
    'atr-ftir-fibres/nylon66_s093.csv',
  ],
  petReference: 'atr-ftir-fibres/polyester-PET_s135_r1.csv',
  petSample: 'atr-ftir-fibres/polyester-PET_s135_r2.csv',
  /** too weak to judge: strongest band about 0.007 absorbance (the quality gate refuses it) */
  weakAcrylic: 'atr-ftir-fibres/acrylic_PAN-MMA-MA_s017_r1.csv',
};

/**
 * Fixtures of the testing API tests: an approved material (approved identity method, approved
 * references) and instruments with a passing, expired or failed instrument check.
 *
 * These rows are INSERTED DIRECTLY through the runtime database connection (the same restricted
 * account the server uses) instead of going through the library and instrument workflows, so the
 * testing tests do not depend on those workflows' own rules (uploader/approver segregation,
 * specificity gate). Everything scientific is still real: the reference and sample files are the
 * real spectra in ../shared/reference-data, the reference bands are picked by the engine, and the
 * instrument check result is the engine's own polystyrene check of the real film spectrum.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Knex } from 'knex';
import { repoRoot } from '../../db/config';
import { sha256Hex } from '../../server/lib/canonical';
import { pickBands } from '../../server/modules/library/engine';
import { invalidateLibraryCache } from '../../server/modules/library/approved-set';
import { checkPolystyrene, defaultMidIrAtrMethod, type IdentityMethod, PH_EUR_POLYSTYRENE_FT, readSpectrum } from '../../server/spectra';
import { db, makeUser, uniqueName } from './helpers';

export const REFERENCE_DATA = path.resolve(repoRoot, '../shared/reference-data');

export function dataFile(rel: string): { buffer: Buffer; name: string } {
  const p = path.join(REFERENCE_DATA, rel);
  return { buffer: fs.readFileSync(p), name: path.basename(p) };
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
  return id as number;
}

async function signatureRow(k: Knex, user: { id: number; fullName: string }, meaning: string, entityType: string, entityId: number): Promise<number> {
  const [id] = await k('e_signature').insert({
    user_id: user.id,
    printed_name: user.fullName,
    meaning,
    entity_type: entityType,
    entity_id: String(entityId),
    content_hash: sha256Hex(`${entityType}:${entityId}:${meaning}`),
    statement: 'test fixture',
    signed_at: new Date(),
  });
  return id as number;
}

let qaCache: { id: number; fullName: string } | null = null;
async function fixtureQa() {
  if (!qaCache) qaCache = await makeUser(['qa_manager']);
  return qaCache;
}

export interface ApprovedMaterial {
  materialId: number;
  code: string;
  name: string;
  methodId: number;
  referenceIds: number[];
}

/** An active material with an approved method and approved references made from real files. */
export async function approvedMaterial(opts: { name: string; referenceFiles: string[]; method?: IdentityMethod; code?: string }): Promise<ApprovedMaterial> {
  const k = db();
  const qa = await fixtureQa();
  const method = opts.method ?? defaultMidIrAtrMethod;
  const code = (opts.code ?? uniqueName('MAT')).toUpperCase().replace(/[^A-Z0-9]/g, '').slice(0, 30);
  const now = new Date();
  const [materialId] = await k('material').insert({
    code, name: opts.name, grade: 'fixture grade', monograph_ref: '', techniques: JSON.stringify([method.technique]), notes: null,
    active: 1, created_by: qa.id, created_at: now, updated_at: now,
  });
  const [methodId] = await k('identity_method').insert({
    material_id: materialId, version: 1, status: 'approved', technique: method.technique, params: JSON.stringify(method), change_note: 'fixture',
    supersedes_id: null, created_by: qa.id, created_at: now, updated_at: now, approved_signature_id: null, approved_at: now,
  });
  await k('identity_method').where({ id: methodId }).update({ approved_signature_id: await signatureRow(k, qa, 'approved', 'identity_method', methodId) });
  const referenceIds: number[] = [];
  for (const [i, rel] of opts.referenceFiles.entries()) {
    const fileId = await storeFile(k, rel, qa.id);
    const f = dataFile(rel);
    const bands = pickBands(readSpectrum(new Uint8Array(f.buffer), f.name), method);
    const [refId] = await k('reference_spectrum').insert({
      material_id: materialId, code: `REF-${code}-${i + 1}`, file_id: fileId, status: 'approved', technique: method.technique,
      supplier: 'fixture', supplier_lot: `F${i + 1}`, measured_how: rel, instrument_id: null, bands: JSON.stringify(bands), meta: null,
      specificity: null, justification: null, created_by: qa.id, created_at: now, updated_at: now,
      approved_signature_id: null, approved_method_id: methodId, approved_at: now, retired_signature_id: null, retire_reason: null,
    });
    await k('reference_spectrum').where({ id: refId }).update({ approved_signature_id: await signatureRow(k, qa, 'approved', 'reference_spectrum', refId) });
    referenceIds.push(refId as number);
  }
  invalidateLibraryCache();
  return { materialId: materialId as number, code, name: opts.name, methodId: methodId as number, referenceIds };
}

export type CheckState = 'valid' | 'expired' | 'failed' | 'none';

/**
 * A mid-IR ATR instrument. 'valid': the real polystyrene film spectrum checked against
 * site-approved ATR positions taken from that spectrum (the engine's check passes; Ph. Eur.
 * 2.2.24 FT positions would fail on ATR, see the engine tests), valid for 24 h. 'expired': the
 * same passing check but its validity ended. 'failed': checked against the Ph. Eur. FT positions
 * (fails on this ATR film). 'none': no check at all.
 */
export async function instrumentWithCheck(state: CheckState, opts: { technique?: string; sampling?: string } = {}): Promise<{ instrumentId: number; checkId: number | null; name: string }> {
  const k = db();
  const qa = await fixtureQa();
  const now = new Date();
  const name = uniqueName('FTIR-');
  const [instrumentId] = await k('instrument').insert({
    name, serial_number: 'SN-' + name, technique: opts.technique ?? 'mid-ir', sampling: opts.sampling ?? 'atr', location: 'Goods-in lab',
    check_validity_hours: 24, active: 1, created_by: qa.id, created_at: now, updated_at: now,
  });
  const film = dataFile('atr-ftir/polystyrene_film.csv');
  const spectrum = readSpectrum(new Uint8Array(film.buffer), film.name);
  const ft = checkPolystyrene(spectrum, { spec: PH_EUR_POLYSTYRENE_FT, mode: 'atr' });
  const siteSpec = {
    name: 'Site ATR positions (fixture)',
    instrument: 'ft' as const,
    bands: ft.bands.map((b) => ({ nominal: Math.round((b.found ?? b.nominal) * 10) / 10, tolerance: 1.0 })),
  };
  const [specId] = await k('instrument_check_spec').insert({
    instrument_id: instrumentId, version: 1, kind: 'site', bands: JSON.stringify(siteSpec.bands), justification: 'ATR positions of the site film (fixture)',
    status: 'approved', created_by: qa.id, created_at: now, approved_signature_id: null,
  });
  if (state === 'none') return { instrumentId: instrumentId as number, checkId: null, name };
  const result = state === 'failed' ? ft : checkPolystyrene(spectrum, { spec: siteSpec, mode: 'atr' });
  const fileId = await storeFile(k, 'atr-ftir/polystyrene_film.csv', qa.id);
  const performedAt = state === 'expired' ? new Date(now.getTime() - 30 * 3600_000) : new Date(now.getTime() - 60_000);
  const [checkId] = await k('instrument_check').insert({
    instrument_id: instrumentId, spec_id: specId, file_id: fileId, result: JSON.stringify(result), verdict: result.verdict, engine_version: result.engineVersion,
    performed_by: qa.id, performed_at: performedAt,
    valid_until: result.verdict === 'pass' ? new Date(performedAt.getTime() + 24 * 3600_000) : null, signature_id: null,
  });
  return { instrumentId: instrumentId as number, checkId: checkId as number, name };
}

/** Fibre files used by the testing tests (real ATR-FTIR spectra, ../shared/reference-data/atr-ftir-fibres). */
export const FIBRES = {
  nylon66Reference: 'atr-ftir-fibres/nylon66_s091_r1.csv',
  nylon66Samples: ['atr-ftir-fibres/nylon66_s091_r2.csv', 'atr-ftir-fibres/nylon66_s090.csv', 'atr-ftir-fibres/nylon66_s093.csv'],
  petReference: 'atr-ftir-fibres/polyester-PET_s135_r1.csv',
  petSample: 'atr-ftir-fibres/polyester-PET_s135_r2.csv',
  /** too weak to judge: strongest band about 0.007 absorbance (quality gate refuses it) */
  weakAcrylic: 'atr-ftir-fibres/acrylic_PAN-MMA-MA_s017_r1.csv',
};

// ---- request helpers (supertest agents signed in through tests/api/helpers.ts agentFor)

type Agent = import('supertest').Agent;

export async function receiveLot(agent: Agent, materialId: number, containerCount: number, extra: Record<string, unknown> = {}) {
  const res = await agent.post('/api/lots').send({
    materialId,
    supplier: 'Brightwater Fibres (invented)',
    supplierLot: 'SL-' + Math.random().toString(36).slice(2, 8).toUpperCase(),
    containerCount,
    receivedDate: new Date().toISOString().slice(0, 10),
    ...extra,
  });
  if (res.status !== 201) throw new Error(`receipt failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body as { id: number; lotNumber: string; containers: { id: number; label: string; seq: number }[] };
}

export async function startTest(agent: Agent, lotId: number, instrumentId: number): Promise<number> {
  const res = await agent.post(`/api/lots/${lotId}/tests`).send({ instrumentId });
  if (res.status !== 201) throw new Error(`start failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body.id as number;
}

export function uploadRequest(agent: Agent, testId: number, target: { label?: string; containerId?: number }, rel: string, fileName?: string) {
  const f = dataFile(rel);
  const req = agent.post(`/api/tests/${testId}/measurements`);
  if (target.label) req.field('label', target.label);
  if (target.containerId) req.field('containerId', String(target.containerId));
  return req.attach('file', f.buffer, { filename: fileName ?? f.name, contentType: 'text/csv' });
}

export async function upload(agent: Agent, testId: number, target: { label?: string; containerId?: number }, rel: string, fileName?: string) {
  const res = await uploadRequest(agent, testId, target, rel, fileName);
  if (res.status !== 201) throw new Error(`upload failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body as { id: number; verdict: 'pass' | 'fail' | 'invalid'; matchScore: number | null; label: string };
}

/** Row counts of the tables an upload writes, to prove that a refused upload stored nothing. */
export async function writeCounts() {
  const k = db();
  const count = async (t: string) => Number((await k(t).count({ n: '*' }).first())!.n);
  return { storedFile: await count('stored_file'), measurement: await count('measurement'), audit: await count('audit_event') };
}

/**
 * Sends every due message of the shared outbox to the fake SMTP server (processOutbox sends at
 * most 20 per call; other test files leave theirs queued too). Call in afterAll so that later
 * files find an empty queue, and before reading capturedMail().
 */
export async function flushMail(): Promise<void> {
  const { initMail, processOutbox } = await import('../../server/lib/mail');
  const { loadConfig } = await import('../../server/lib/config');
  await initMail(loadConfig({ smtp: null }));
  for (let i = 0; i < 200; i++) if ((await processOutbox(db(), 50)) === 0) break;
}

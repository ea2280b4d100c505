/**
 * A passed, verified lot built directly in the database, for the certificate tests, the
 * certificate benchmark and the end-to-end seed.
 *
 * WHY DIRECTLY: the certificate module only reads these records, and this fixture lets its tests
 * stand on their own. Every record is what the library and testing modules would have written:
 * approved method (version 1) and reference spectrum with QA's approval signature, an
 * instrument with a site check specification and a passing instrument check, a lot with its
 * containers, one identity test signed "performed" by an operator and "verified" by a second
 * person, and one measurement per container.
 *
 * The spectra and results are real, not invented: the reference and the samples are repeat
 * ATR-FTIR scans of one cotton fibre sample from ../shared/reference-data/atr-ftir-fibres
 * (FasTEX-KCL, MIT; see that folder's README), scored by the Drumline engine (scoreAgainst with
 * defaultMidIrAtrMethod), and the instrument check is checkPolystyrene on the polystyrene film
 * of ../shared/reference-data/atr-ftir against a site specification of +-4 cm-1 (the film was
 * measured by ATR, whose band maxima sit 1-2.3 cm-1 low; Ph. Eur. 2.2.24's +-1 cm-1 is written
 * for transmission).
 * Each container's raw file is the scan with one leading comment line naming the container, so
 * every container has its own bytes and SHA-256, as separate uploads would.
 */
import fs from 'node:fs';
import path from 'node:path';
import { randomBytes } from 'node:crypto';
import knexFactory, { type Knex } from 'knex';
import { dbSettings, knexConfig, repoRoot } from '../../db/config';
import { createSiteAccounts } from '../../db/site-accounts';
import { sha256Hex } from '../../server/lib/canonical';
import { contentHash } from '../../server/lib/esign';
import { specSignedContent } from '../../server/modules/instruments';
import { referenceSignedContent } from '../../server/modules/library/references';
import { methodSignedContent } from '../../server/modules/library/service';
import { loadContext, signedContent } from '../../server/modules/testing/context';
import { hashPassword } from '../../server/lib/passwords';
import type { Role } from '../../server/lib/contract';
import type { StoredFileRow } from '../../server/lib/db-tables';
import {
  checkPolystyrene,
  defaultMidIrAtrMethod,
  PH_EUR_POLYSTYRENE_FT,
  readSpectrum,
  scoreAgainst,
  type IdentityResult,
  type PolystyreneSpec,
} from '../../server/spectra';

export const REFERENCE_DATA = path.resolve(repoRoot, '../shared/reference-data');
const FIBRES = path.join(REFERENCE_DATA, 'atr-ftir-fibres');
export const REFERENCE_FILE = 'cotton_natural-brown_s6.2_r1.csv';
export const SAMPLE_FILES = ['cotton_natural-brown_s6.2_r2.csv', 'cotton_natural-brown_s6.2_r3.csv'];
const POLYSTYRENE_FILE = path.join(REFERENCE_DATA, 'atr-ftir', 'polystyrene_film.csv');
export const FIXTURE_PASSWORD = 'fixture-password-2026';

export const SITE_ATR_SPEC: PolystyreneSpec = {
  ...PH_EUR_POLYSTYRENE_FT,
  name: 'Site specification, ATR accessory (+-4 cm-1)',
  bands: PH_EUR_POLYSTYRENE_FT.bands.map((b) => ({ ...b, tolerance: 4 })),
};

export interface FixtureUser {
  id: number;
  username: string;
  fullName: string;
  password: string;
}

export interface PassedLot {
  lotId: number;
  lotNumber: string;
  testId: number;
  materialId: number;
  materialCode: string;
  containers: { id: number; label: string; measurementId: number; fileSha256: string }[];
  operator: FixtureUser;
  verifier: FixtureUser;
  qa: FixtureUser;
  referenceCode: string;
}

let seq = 0;
function unique(prefix: string): string {
  seq++;
  return `${prefix}${Date.now().toString(36)}${seq}${randomBytes(2).toString('hex')}`.toUpperCase();
}

/** Engine results computed once per process (the same bytes give the same result). */
let cachedResults: Map<string, IdentityResult> | null = null;
let cachedCheck: ReturnType<typeof checkPolystyrene> | null = null;

function engineResults(): Map<string, IdentityResult> {
  if (cachedResults) return cachedResults;
  const ref = {
    id: 'REFERENCE',
    spectrum: readSpectrum(fs.readFileSync(path.join(FIBRES, REFERENCE_FILE)), REFERENCE_FILE),
  };
  cachedResults = new Map();
  for (const f of SAMPLE_FILES) {
    const r = scoreAgainst(readSpectrum(fs.readFileSync(path.join(FIBRES, f)), f), [ref], defaultMidIrAtrMethod);
    if (r.verdict !== 'pass')
      throw new Error(
        `fixture: ${f} did not pass against ${REFERENCE_FILE} (${r.verdict}); the fixture needs passing repeat scans`,
      );
    cachedResults.set(f, r);
  }
  return cachedResults;
}

async function insertUser(db: Knex, roles: Role[], tag: string, fullName: string): Promise<FixtureUser> {
  const username = `${tag}${unique('')}`.toLowerCase().slice(0, 60);
  // Roles come only from role grants: fixture accounts take the site-setup path of the owner
  // account of the same database (db/site-accounts.ts), as a site's first accounts do.
  const database = (db.client.config as { connection: { database: string } }).connection.database;
  const owner = knexFactory(knexConfig(dbSettings('owner', database), { min: 0, max: 1 }));
  try {
    const hash = await hashPassword(FIXTURE_PASSWORD);
    const ids = await createSiteAccounts(owner, [{ username, fullName, email: `${username}@example.test`, roles }], {
      passwordHash: () => hash,
      mustChangePassword: false,
      reason: 'certificate test fixture',
      audit: false,
    });
    return { id: ids.get(username)!, username, fullName, password: FIXTURE_PASSWORD };
  } finally {
    await owner.destroy();
  }
}

async function signature(
  db: Knex,
  u: FixtureUser,
  meaning: string,
  entityType: string,
  entityId: number | string,
  at: Date,
  content: unknown,
): Promise<number> {
  // The hash of the content the application would have signed, so the integrity sweep finds it intact.
  const [id] = await db('e_signature').insert({
    user_id: u.id,
    printed_name: u.fullName,
    meaning,
    entity_type: entityType,
    entity_id: String(entityId),
    content_hash: contentHash(content),
    statement: null,
    signed_at: at,
  });
  return Number(id);
}

async function storeFile(
  db: Knex,
  data: Buffer,
  fileName: string,
  mediaType: string,
  by: number,
  at: Date,
): Promise<Pick<StoredFileRow, 'id' | 'sha256'>> {
  const sha = sha256Hex(data);
  const [id] = await db('stored_file').insert({
    sha256: sha,
    file_name: fileName,
    media_type: mediaType,
    size: data.length,
    data,
    uploaded_by: by,
    uploaded_at: at,
  });
  return { id: Number(id), sha256: sha };
}

export interface PassedLotOptions {
  containers?: number;
  /** Printed names of the signers (unique per call by default). */
  names?: { operator?: string; verifier?: string; qa?: string };
  /** Existing users instead of new ones. */
  users?: { operator?: FixtureUser; verifier?: FixtureUser; qa?: FixtureUser };
  /**
   * 'passed' (default): verified and passed, ready for its certificate. 'awaiting-verification':
   * performed and signed by the operator, for a second person to verify through the real API
   * (the browser test), which then issues the certificate itself.
   */
  stage?: 'passed' | 'awaiting-verification';
}

/** Creates a passed, verified lot with `containers` containers (default 3). Uses the given connection (runtime account is enough). */
export async function createPassedLot(db: Knex, opts: PassedLotOptions = {}): Promise<PassedLot> {
  const n = opts.containers ?? 3;
  const verified = (opts.stage ?? 'passed') === 'passed';
  const results = engineResults();
  const tag = unique('');
  const operator =
    opts.users?.operator ?? (await insertUser(db, ['operator'], 'op', opts.names?.operator ?? `Olga Operator ${tag}`));
  const verifier =
    opts.users?.verifier ??
    (await insertUser(db, ['verifier'], 've', opts.names?.verifier ?? `Victor Verifier ${tag}`));
  const qa = opts.users?.qa ?? (await insertUser(db, ['qa_manager'], 'qa', opts.names?.qa ?? `Quinn Quality ${tag}`));
  const t0 = new Date(Date.now() - 3 * 3600_000);
  const at = (min: number) => new Date(t0.getTime() + min * 60_000);

  // Library: material, approved method v1, approved reference.
  const materialCode = `CTN-${tag}`.slice(0, 40);
  const [materialId] = await db('material').insert({
    code: materialCode,
    name: 'Cotton linters, purified',
    grade: 'Pharmaceutical grade',
    monograph_ref: '',
    techniques: JSON.stringify(['mid-ir-atr']),
    notes: 'Certificate test fixture',
    active: 1,
    created_by: qa.id,
    created_at: at(0),
    updated_at: at(0),
  });
  // The method's author is another QA manager: the author never approves (db/migrations/110_method_control.ts).
  const author = await insertUser(db, ['qa_manager'], 'qa', `Irma Author ${tag}`);
  const [methodId] = await db('identity_method').insert({
    material_id: materialId,
    version: 1,
    status: 'approved',
    technique: 'mid-ir-atr',
    params: JSON.stringify(defaultMidIrAtrMethod),
    change_note: 'First version',
    supersedes_id: null,
    created_by: author.id,
    created_at: at(1),
    updated_at: at(2),
    approved_signature_id: null,
    approved_at: null,
  });
  const methodSig = await signature(
    db,
    qa,
    'approved',
    'identity_method',
    methodId,
    at(2),
    // inserted above as approved; the status column is a plain string in the table type
    methodSignedContent({ ...(await db('identity_method').where({ id: methodId }).first())!, status: 'approved' }),
  );
  await db('identity_method')
    .where({ id: methodId })
    .update({ approved_signature_id: methodSig, approved_at: at(2) });

  const refBytes = fs.readFileSync(path.join(FIBRES, REFERENCE_FILE));
  const refFile = await storeFile(db, refBytes, REFERENCE_FILE, 'text/csv', qa.id, at(3));
  const referenceCode = `REF-${tag}`.slice(0, 60);
  const [referenceId] = await db('reference_spectrum').insert({
    material_id: materialId,
    code: referenceCode,
    file_id: refFile.id,
    status: 'draft',
    technique: 'mid-ir-atr',
    supplier: 'Quillmere Fibre Works',
    supplier_lot: 'NF-2291',
    measured_how: 'ATR-FTIR, diamond, 1 cm-1',
    instrument_id: null,
    bands: '[]',
    meta: null,
    specificity: null,
    justification: null,
    created_by: operator.id,
    created_at: at(3),
    updated_at: at(3),
  });
  const refSig = await signature(
    db,
    qa,
    'approved',
    'reference_spectrum',
    referenceId,
    at(4),
    referenceSignedContent(Number(referenceId), refFile.sha256, [], Number(methodId)),
  );
  await db('reference_spectrum')
    .where({ id: referenceId })
    .update({
      status: 'approved',
      approved_signature_id: refSig,
      approved_method_id: methodId,
      approved_at: at(4),
      updated_at: at(4),
    });

  // Instrument with a site check specification and a passing check today.
  const [instrumentId] = await db('instrument').insert({
    name: `FTIR bench ${tag}`.slice(0, 120),
    serial_number: `SN-${tag}`.slice(0, 80),
    technique: 'mid-ir',
    sampling: 'atr',
    location: 'Warehouse QC, bay 2',
    check_validity_hours: 24,
    active: 1,
    created_by: qa.id,
    created_at: at(0),
    updated_at: at(0),
  });
  const [specId] = await db('instrument_check_spec').insert({
    instrument_id: instrumentId,
    version: 1,
    kind: 'site',
    bands: JSON.stringify(SITE_ATR_SPEC.bands),
    justification: 'ATR band maxima sit 1-2.3 cm-1 below the transmission values; site tolerance +-4 cm-1.',
    status: 'approved',
    created_by: qa.id,
    created_at: at(0),
  });
  const specSig = await signature(
    db,
    qa,
    'approved',
    'instrument_check_spec',
    specId,
    at(0),
    specSignedContent(Number(specId), Number(instrumentId), 1, 'site', SITE_ATR_SPEC.bands),
  );
  await db('instrument_check_spec').where({ id: specId }).update({ approved_signature_id: specSig });
  const psBytes = fs.readFileSync(POLYSTYRENE_FILE);
  cachedCheck ??= checkPolystyrene(readSpectrum(psBytes, 'polystyrene_film.csv'), { spec: SITE_ATR_SPEC, mode: 'atr' });
  if (cachedCheck.verdict !== 'pass') throw new Error('fixture: the polystyrene check does not pass');
  const psFile = await storeFile(db, psBytes, 'polystyrene_film.csv', 'text/csv', operator.id, at(10));
  const [checkId] = await db('instrument_check').insert({
    instrument_id: instrumentId,
    spec_id: specId,
    file_id: psFile.id,
    result: JSON.stringify(cachedCheck),
    verdict: 'pass',
    engine_version: cachedCheck.engineVersion,
    performed_by: operator.id,
    performed_at: at(10),
    valid_until: new Date(at(10).getTime() + 24 * 3600_000),
    signature_id: null,
  });
  const checkSig = await signature(db, operator, 'instrument-check', 'instrument_check', checkId, at(10), {
    checkId: Number(checkId),
    instrumentId: Number(instrumentId),
    specId: Number(specId),
    fileSha256: psFile.sha256,
    verdict: 'pass',
    bands: (JSON.parse(JSON.stringify(cachedCheck)) as { bands: unknown }).bands,
  });
  await db('instrument_check').where({ id: checkId }).update({ signature_id: checkSig });

  // Lot, containers, test, measurements.
  const lotNumber = `RM-${tag}`.slice(0, 40);
  const [lotId] = await db('lot').insert({
    lot_number: lotNumber,
    material_id: materialId,
    supplier: 'Brackenford Textile Supply',
    supplier_lot: `HTC-${tag.slice(-6)}`,
    container_count: n,
    received_date: t0.toISOString().slice(0, 10),
    notes: null,
    status: 'quarantine',
    identity_status: verified ? 'passed' : 'awaiting-verification',
    created_by: operator.id,
    created_at: at(5),
    updated_at: at(90),
  });
  const containers: PassedLot['containers'] = [];
  const [testId] = await db('identity_test').insert({
    lot_id: lotId,
    attempt: 1,
    status: 'in-progress',
    method_id: methodId,
    instrument_id: instrumentId,
    created_by: operator.id,
    created_at: at(15),
    updated_at: at(90),
    row_version: 0,
  });
  for (let i = 1; i <= n; i++) {
    const label = `${lotNumber}-${String(i).padStart(3, '0')}`;
    const [containerId] = await db('container').insert({ lot_id: lotId, seq: i, label });
    const src = SAMPLE_FILES[(i - 1) % SAMPLE_FILES.length];
    const bytes = Buffer.concat([Buffer.from(`# container ${label}\n`), fs.readFileSync(path.join(FIBRES, src))]);
    const file = await storeFile(db, bytes, `${label}.csv`, 'text/csv', operator.id, at(20 + i));
    const result = {
      ...results.get(src)!,
      bestReferenceId: String(referenceId),
      references: results.get(src)!.references.map((r) => ({ ...r, referenceId: String(referenceId) })),
    };
    const corr = result.criteria.find((c) => c.key === 'correlation')!.value;
    const [measurementId] = await db('measurement').insert({
      test_id: testId,
      container_id: containerId,
      file_id: file.id,
      instrument_id: instrumentId,
      instrument_check_id: checkId,
      method_id: methodId,
      reference_ids: JSON.stringify([referenceId]),
      verdict: 'pass',
      match_score: corr,
      result: JSON.stringify(result),
      engine_version: result.engineVersion,
      authorised_by_investigation_id: null,
      created_by: operator.id,
      created_at: at(20 + i),
    });
    containers.push({ id: Number(containerId), label, measurementId: Number(measurementId), fileSha256: file.sha256 });
  }
  const signed = signedContent(await loadContext(db, Number(testId)));
  const performed = await signature(db, operator, 'performed', 'identity_test', testId, at(60), signed);
  const verifiedSig = verified
    ? await signature(db, verifier, 'verified', 'identity_test', testId, at(90), signed)
    : null;
  // The permitted steps of a test (the database refuses any other change): performed, then verified.
  await db('identity_test').where({ id: testId }).update({
    status: 'awaiting-verification',
    performed_by: operator.id,
    performed_signature_id: performed,
    row_version: 1,
  });
  if (verified)
    await db('identity_test')
      .where({ id: testId })
      .update({ status: 'verified', verified_by: verifier.id, verified_signature_id: verifiedSig, row_version: 2 });

  return {
    lotId: Number(lotId),
    lotNumber,
    testId: Number(testId),
    materialId: Number(materialId),
    materialCode,
    containers,
    operator,
    verifier,
    qa,
    referenceCode,
  };
}

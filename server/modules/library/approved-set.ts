/**
 * What every identity test is judged against, held in memory: per material, the approved
 * identity method version and its approved references prepared for it; and per method grid,
 * the whole approved library as the engine's contiguous search library.
 *
 * Cache validity: each entry carries a fingerprint read from the database on every call
 * (approved method id + approved reference ids), so a change made by another server process
 * is seen too (docs/architecture.md, "The identity flow"); approvals and retirements in this process also clear the
 * cache at once (invalidateLibraryCache). Approved references never change (bands are frozen
 * at approval and files are immutable), so a fingerprint of ids is enough.
 *
 * The testing module calls getApprovedReferenceSet, searchApprovedLibrary and
 * getLibraryForMethodGrid; see their comments for the exact contracts.
 */
import type { Knex } from 'knex';
import { getDb } from '../../lib/db';
import {
  buildLibrary,
  type IdentityMethod,
  type PreparedReference,
  preparationKey,
  prepareReference,
  searchLibrary,
  type Spectrum,
  SpectrumError,
} from '../../spectra';
import type { Band } from '../../spectra';
import { spectrumOfFile, toEngineBands } from './engine';
import type { MethodVersion } from './contract';
import * as repo from './repo';

export interface ApprovedReference {
  id: number;
  code: string;
  materialId: number;
  spectrum: Spectrum;
  bands: Band[];
  /** Prepared for the set's method (engine prepareReference); pass these to scoreAgainst. */
  prepared: PreparedReference;
}

export interface ApprovedReferenceSet {
  /** The approved identity method version of the material (the row a test must record). */
  method: MethodVersion;
  /** Approved (not retired) references of the material, oldest first. May be empty. */
  references: ApprovedReference[];
}

interface CachedSet {
  fingerprint: string;
  value: ApprovedReferenceSet;
}
const setCache = new Map<number, CachedSet>();

export interface LibraryEntryInfo {
  referenceId: number;
  referenceCode: string;
  materialId: number;
  materialCode: string;
  materialName: string;
}

export interface MethodGridLibrary {
  /** preparationKey of the method the library was prepared for. */
  key: string;
  /** The engine's library (buildLibrary), or null when no approved reference fits this method. */
  library: ReturnType<typeof buildLibrary> | null;
  /** One entry per library row, same order as given to buildLibrary. */
  entries: LibraryEntryInfo[];
  /** Approved references that could not be prepared for this method (e.g. range not covered). */
  skipped: { referenceId: number; reason: string }[];
}
const gridCache = new Map<string, { fingerprint: string; value: MethodGridLibrary }>();

export function invalidateLibraryCache(): void {
  setCache.clear();
  gridCache.clear();
  matrixCacheClear();
}

let matrixClearHook: () => void = () => {};
/** specificity.ts registers its own cache clearing here (avoids an import cycle). */
export function onLibraryInvalidate(fn: () => void): void {
  matrixClearHook = fn;
}
function matrixCacheClear(): void {
  matrixClearHook();
}

/**
 * The approved reference set of a material (grade): its approved identity method version and
 * its approved references prepared for that method. Returns null when the material has no
 * approved method. Signature for the testing module:
 *   getApprovedReferenceSet(materialId: number, db?: Knex): Promise<ApprovedReferenceSet | null>
 * Use: `scoreAgainst(sample, set.references.map(r => r.prepared), set.method.params)` and record
 * set.method.id and set.references.map(r => r.id) with the measurement.
 */
export async function getApprovedReferenceSet(
  materialId: number,
  db: Knex = getDb(),
): Promise<ApprovedReferenceSet | null> {
  const methodRow = await repo.approvedMethodOf(db, materialId);
  if (!methodRow) return null;
  const refRows = await db('reference_spectrum').where({ material_id: materialId, status: 'approved' }).orderBy('id');
  const fingerprint = `${methodRow.id}|${refRows.map((r) => r.id).join(',')}`;
  const hit = setCache.get(materialId);
  if (hit && hit.fingerprint === fingerprint) return hit.value;
  const method = repo.toMethod(methodRow);
  const references: ApprovedReference[] = [];
  for (const r of refRows) {
    const spectrum = await spectrumOfFile(db, r.file_id);
    const bands = toEngineBands(repo.toReference(r).bands);
    const prepared = prepareReference(
      { id: String(r.id), label: r.code, materialId: String(materialId), spectrum, bands },
      method.params,
    );
    references.push({ id: r.id, code: r.code, materialId, spectrum, bands, prepared });
  }
  const value = { method, references };
  setCache.set(materialId, { fingerprint, value });
  return value;
}

/**
 * Every approved reference of every active material whose approved method has the same
 * technique as `method` (an ATR sample is compared only with ATR references), prepared for
 * `method` and held as one engine library (contiguous, mean-centred, unit-normalised).
 * Signature: getLibraryForMethodGrid(method: IdentityMethod, db?: Knex): Promise<MethodGridLibrary>
 */
export async function getLibraryForMethodGrid(method: IdentityMethod, db: Knex = getDb()): Promise<MethodGridLibrary> {
  const rows = await db('reference_spectrum as r')
    .join('material as m', 'm.id', 'r.material_id')
    .join('identity_method as im', function () {
      this.on('im.material_id', '=', 'm.id').andOnVal('im.status', '=', 'approved');
    })
    .where('r.status', 'approved')
    .andWhere('m.active', 1)
    .andWhere('im.technique', method.technique)
    .select<(repo.ReferenceRow & { m_code: string; m_name: string })[]>('r.*', 'm.code as m_code', 'm.name as m_name')
    .orderBy('r.id');
  const key = preparationKey(method);
  const fingerprint = rows.map((r) => r.id).join(',');
  const hit = gridCache.get(key);
  if (hit && hit.fingerprint === fingerprint) return hit.value;
  const entries: LibraryEntryInfo[] = [];
  const inputs: { id: string; materialId: string; spectrum: Spectrum; bands: Band[] }[] = [];
  const skipped: MethodGridLibrary['skipped'] = [];
  for (const r of rows) {
    const spectrum = await spectrumOfFile(db, r.file_id);
    // A reference that does not cover this method's range cannot be in its grid.
    if (spectrum.x[0] > method.range.from || spectrum.x[spectrum.x.length - 1] < method.range.to) {
      skipped.push({ referenceId: r.id, reason: 'does not cover the method range' });
      continue;
    }
    inputs.push({
      id: String(r.id),
      materialId: String(r.material_id),
      spectrum,
      bands: toEngineBands(repo.toReference(r).bands),
    });
    entries.push({
      referenceId: r.id,
      referenceCode: r.code,
      materialId: r.material_id,
      materialCode: r.m_code,
      materialName: r.m_name,
    });
  }
  let library: MethodGridLibrary['library'] = null;
  if (inputs.length) {
    try {
      library = buildLibrary(inputs, method);
    } catch (e) {
      if (!(e instanceof SpectrumError)) throw e;
      skipped.push({ referenceId: 0, reason: e.message });
    }
  }
  const value = { key, library, entries, skipped };
  gridCache.set(key, { fingerprint, value });
  return value;
}

export interface LibraryHit extends LibraryEntryInfo {
  /** Correlation of the prepared spectra (the match score). */
  score: number;
}

/**
 * Library search for the mix-up hint: the k approved references (all materials) closest to
 * the sample under `method`, best first. Signature:
 *   searchApprovedLibrary(sample: Spectrum, method: IdentityMethod, k?: number, db?: Knex): Promise<LibraryHit[]>
 * The caller may drop hits of the tested material itself.
 */
export async function searchApprovedLibrary(
  sample: Spectrum,
  method: IdentityMethod,
  k = 5,
  db: Knex = getDb(),
): Promise<LibraryHit[]> {
  const lib = await getLibraryForMethodGrid(method, db);
  if (!lib.library || lib.entries.length === 0) return [];
  const hits = searchLibrary(lib.library, sample, k);
  const byId = new Map(lib.entries.map((e) => [String(e.referenceId), e]));
  return hits.map((h: { id: string; score: number }) => ({ ...byId.get(h.id)!, score: h.score }));
}

const pinnedCache = new Map<string, ApprovedReferenceSet>();

/**
 * The method version and reference set a test attempt started with (attempt_pin, docs/methods.md):
 * a new method version or a newly approved or retired reference applies to new attempts only.
 * Returns null for an attempt started before pins were recorded (it follows the approved set).
 *   getPinnedReferenceSet(testId: number, db?: Knex): Promise<ApprovedReferenceSet | null>
 */
export async function getPinnedReferenceSet(testId: number, db: Knex = getDb()): Promise<ApprovedReferenceSet | null> {
  const pin = await db('attempt_pin').where({ test_id: testId }).first();
  if (!pin) return null;
  const key = `${pin.method_id}|${pin.reference_ids}`;
  const hit = pinnedCache.get(key);
  if (hit) return hit;
  const methodRow = await repo.findMethod(db, pin.method_id);
  if (!methodRow) return null;
  const method = repo.toMethod(methodRow);
  const ids = JSON.parse(pin.reference_ids) as number[];
  const refRows = await db('reference_spectrum')
    .whereIn('id', ids.length ? ids : [0])
    .orderBy('id');
  const references: ApprovedReference[] = [];
  for (const r of refRows) {
    const spectrum = await spectrumOfFile(db, r.file_id);
    const bands = toEngineBands(repo.toReference(r).bands);
    const prepared = prepareReference(
      { id: String(r.id), label: r.code, materialId: String(r.material_id), spectrum, bands },
      method.params,
    );
    references.push({ id: r.id, code: r.code, materialId: r.material_id, spectrum, bands, prepared });
  }
  const value = { method, references };
  if (pinnedCache.size > 500) pinnedCache.clear();
  pinnedCache.set(key, value);
  return value;
}

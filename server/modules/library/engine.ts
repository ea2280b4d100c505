/**
 * The library's small adapter over the spectral engine (server/spectra/index.ts): reading a
 * stored file into a spectrum (cached by file id: stored files never change), picking the
 * characteristic bands of a reference with their group-frequency assignment. Uploads are read in
 * the compute pool (server/workers/pool.ts); a SpectrumError becomes the API's 422 naming the file
 * (server/lib/errors.ts).
 */
import type { Db } from '../../lib/db';
import {
  type Band,
  type IdentityMethod,
  prepare,
  shapeOf,
  describeAssignment,
  rankCandidates,
  type Spectrum,
} from '../../spectra';
import type { BandCandidates, IdentityMethodInput, StoredBand } from './contract';
import { readSpectrumOff } from '../../workers/pool';

// Compile-time: a method validated by the contract's schema is an engine IdentityMethod and vice versa.
type Same<A, B> = [A] extends [B] ? ([B] extends [A] ? true : false) : false;
const _methodShapeMatches: Same<IdentityMethodInput, IdentityMethod> = true;
void _methodShapeMatches;

/** "C=O stretch, ester (1735-1750 cm-1, strong)" - the most likely group-frequency assignment (engine table). */
export function assignmentText(position: number, width?: number): string {
  return describeAssignment(position, width === undefined ? undefined : shapeOf(width));
}

/**
 * The characteristic bands of a reference under a method: the engine's peaks on the prepared
 * trace whose prominence reaches the method's peakProminence (the same rule the engine uses
 * when a reference has no band list), each with its assignment. Empty when band picking is off.
 */
export function pickBands(spectrum: Spectrum, method: IdentityMethod): StoredBand[] {
  const minProminence = method.peakProminence;
  if (minProminence === null) return [];
  const prepared = prepare(spectrum, method);
  return prepared.peaks
    .filter((p) => p.prominence >= minProminence)
    .map((p) => ({
      position: round(p.position, 2),
      prominence: round(p.prominence, 4),
      width: round(p.width, 1),
      assignment: assignmentText(p.position, p.width),
      origin: 'auto' as const,
    }));
}

/**
 * The assignment QA set for a band (docs/methods.md, "Band assignments"): the qaAssignment field
 * (from issue 18 on); on a band QA edited before that, its own text when it differs from the
 * correlation table's; otherwise null - the table's text is a candidate, not an assignment.
 */
export function qaAssignmentOf(b: StoredBand): string | null {
  if (b.qaAssignment !== undefined) return b.qaAssignment.trim() || null;
  if (b.origin === 'edited' && b.assignment.trim() && b.assignment !== assignmentText(b.position, b.width))
    return b.assignment;
  return null;
}

/** Bands as GMP views read them: each with the assignment QA set (or null). */
export function withShownAssignments(bands: StoredBand[]): StoredBand[] {
  return bands.map((b) => ({ ...b, shownAssignment: qaAssignmentOf(b) }));
}

/** The correlation table's candidates for each band, ranked by the spectrum's other bands (for QA's information). */
export function bandCandidates(bands: StoredBand[]): BandCandidates[] {
  const all = bands.map((b) => ({ position: b.position, prominence: b.prominence, width: b.width }));
  return all.map((b) => ({
    position: b.position,
    candidates: rankCandidates(b, all)
      .slice(0, 3)
      .map((c) => ({
        group: c.group.group,
        range: `${c.group.from}-${c.group.to} cm-1, ${c.group.intensity}`,
        why: c.missing.length
          ? `no ${c.missing.join(', no ')}`
          : c.support.length
            ? `with ${c.support.join(', ')}`
            : '',
      })),
  }));
}

/** Stored bands as the engine's Band list: a band carries QA's assignment or none (empty). */
export function toEngineBands(bands: StoredBand[]): Band[] {
  return bands.map((b) => ({
    position: b.position,
    prominence: b.prominence,
    width: b.width,
    assignment: qaAssignmentOf(b) ?? '',
  }));
}

export function round(v: number, digits: number): number {
  const f = 10 ** digits;
  return Math.round(v * f) / f;
}

const spectrumCache = new Map<number, Spectrum>();
const MAX_CACHED = 5000;

/** The spectrum of a stored file (parsed once per process, in the compute pool; the bytes never change). */
export async function spectrumOfFile(db: Db, fileId: number): Promise<Spectrum> {
  const hit = spectrumCache.get(fileId);
  if (hit) return hit;
  const f = await db('stored_file').where({ id: fileId }).first();
  if (!f) throw new Error(`stored file ${fileId} is missing`);
  const s = await readSpectrumOff(new Uint8Array(f.data), f.file_name);
  if (spectrumCache.size >= MAX_CACHED) spectrumCache.delete(spectrumCache.keys().next().value as number);
  spectrumCache.set(fileId, s);
  return s;
}

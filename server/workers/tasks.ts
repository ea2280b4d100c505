/** The tasks of the compute pool and their results (shared by server/workers/pool.ts and the worker). */
import type {
  IdentityMethod,
  IdentityResult,
  PolystyreneOptions,
  PolystyreneResult,
  PreparedReference,
  QualityReport,
  Spectrum,
  SpectrumMeta,
} from '../spectra';
import type { StoredBand } from '../modules/library/contract';
import type { SpectrumFingerprint } from '../spectra';

/** What the copy lookup indexes of a spectrum (server/modules/provenance). */
export interface ProvenanceKeys {
  decodedSha256: string;
  fingerprint: SpectrumFingerprint;
  /** rounding step of y (0 = full precision) */
  yStep: number;
}

export type Task =
  | { op: 'sha256'; bytes: Uint8Array }
  | { op: 'read'; bytes: Uint8Array; fileName: string }
  | { op: 'measure'; bytes: Uint8Array; fileName: string; references: PreparedReference[]; method: IdentityMethod }
  | { op: 'instrument-check'; bytes: Uint8Array; fileName: string; options: PolystyreneOptions }
  | { op: 'reference'; bytes: Uint8Array; fileName: string; method: IdentityMethod }
  | { op: 'password'; password: string; userInputs: string[] };

export interface MeasureOutput {
  meta: SpectrumMeta;
  /** the sample as read (for the copy check and the mix-up hint) */
  spectrum: Spectrum;
  result: IdentityResult;
  sha256: string;
  keys: ProvenanceKeys;
}
export interface InstrumentCheckOutput {
  result: PolystyreneResult;
  sha256: string;
  spectrum: Spectrum;
  keys: ProvenanceKeys;
}
export interface ReferenceOutput {
  spectrum: Spectrum;
  quality: QualityReport;
  bands: StoredBand[];
  sha256: string;
  keys: ProvenanceKeys;
}
export interface StrengthOutput {
  /** zxcvbn score 0-4 */
  score: number;
  guessesLog10: number;
  warning: string | null;
  suggestions: string[];
}

export interface WorkerError {
  name: string;
  code?: string;
  message: string;
  details?: unknown;
  stack?: string;
}

export type TaskResult = { ok: true; value: unknown } | { ok: false; error: WorkerError };

/** What the worker sends back: the result and the bytes the task was lent (moved back). */
export type TaskReply = TaskResult & { bytes?: Uint8Array };

/**
 * Errors raised while reading a spectrum file.
 *
 * Every refusal carries a stable `code` (for the API, the audit trail and tests)
 * and a `message` written for the person at the instrument: one or two plain
 * sentences that say what is wrong and what to do next. `details` holds the
 * machine-readable specifics (line number, values found, limits).
 */

export const SPECTRUM_ERROR_CODES = [
  // The file as a whole
  'EMPTY_FILE',
  'BINARY_FILE',
  'FILE_TOO_LARGE',
  // JCAMP-DX structure and checks
  'JCAMP_UNREADABLE',
  'JCAMP_TRUNCATED',
  'JCAMP_MISSING_LABEL',
  'JCAMP_BAD_LABEL_VALUE',
  'JCAMP_UNSUPPORTED_FORM',
  'JCAMP_BAD_CHARACTER',
  'JCAMP_Y_CHECK',
  'JCAMP_X_CHECK',
  'JCAMP_NPOINTS_MISMATCH',
  'JCAMP_NOT_IR',
  'JCAMP_MULTIBLOCK',
  'JCAMP_PEAK_TABLE_ONLY',
  // Delimited text structure
  'NO_DATA_ROWS',
  'ONE_COLUMN',
  'TOO_MANY_COLUMNS',
  'INCONSISTENT_COLUMNS',
  'TEXT_IN_NUMBERS',
  // Values and units
  'UNKNOWN_X_UNITS',
  'UNKNOWN_Y_UNITS',
  'X_UNITS_MISMATCH',
  'TOO_FEW_POINTS',
  'NON_FINITE',
  'DUPLICATE_X',
  'NON_MONOTONIC_X',
  'TRANSMITTANCE_RANGE',
  'NON_POSITIVE_TRANSMITTANCE',
  'REFLECTANCE_RANGE',
  // Analysis (method, quality gate, grid); added by the analysis part of the engine
  'INVALID_METHOD',
  'RANGE_NOT_COVERED',
  'TOO_WEAK',
  'SATURATED',
  'TOO_NOISY',
  'METHOD_MISMATCH',
  'NO_REFERENCES',
] as const;

export type SpectrumErrorCode = (typeof SPECTRUM_ERROR_CODES)[number];

export class SpectrumError extends Error {
  readonly code: SpectrumErrorCode;
  readonly details?: unknown;

  constructor(code: SpectrumErrorCode, message: string, details?: unknown) {
    super(message);
    this.name = 'SpectrumError';
    this.code = code;
    this.details = details;
  }
}

export function isSpectrumError(e: unknown): e is SpectrumError {
  return e instanceof SpectrumError;
}

/** Largest file accepted, in bytes (20 MiB). A full IR spectrum as text is well below 1 MB. */
export const MAX_FILE_BYTES = 20 * 1024 * 1024;

/** Fewest points accepted for a spectrum. */
export const MIN_POINTS = 50;

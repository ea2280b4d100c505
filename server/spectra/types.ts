/**
 * Shared types of the spectral engine. The engine is pure: typed arrays in,
 * plain data out; no I/O, no Express, no database.
 */
import type { StatedAcquisition } from './provenance';

/** What the y values of a spectrum mean after reading (always absorbance-like). */
export type AbsorbanceKind = 'absorbance' | 'log-inverse-reflectance' | 'kubelka-munk';

export interface SpectrumMeta {
  title: string;
  fileName: string;
  format: 'jcamp-dx' | 'delimited';
  /** Units as found in the file, e.g. '1/CM', 'NANOMETERS', 'cm-1', 'um'. */
  originalXUnits: string;
  /** Units as found in the file, e.g. 'TRANSMITTANCE', 'ABSORBANCE', '%T'. */
  originalYUnits: string;
  /** What y holds now. */
  yKind: AbsorbanceKind;
  points: number;
  /** Nominal resolution in cm-1 when the file states it. */
  resolution?: number;
  /** JCAMP-DX ##DATA TYPE when present. */
  dataType?: string;
  /** Non-fatal remarks for the reviewer (e.g. "x was descending, reversed"). */
  warnings: string[];
  /** What the file states about its acquisition (JCAMP-DX only; provenance.ts). */
  stated?: StatedAcquisition;
}

/** A spectrum on a wavenumber axis (cm-1, strictly ascending) with absorbance-like y. */
export interface Spectrum {
  x: Float64Array;
  y: Float64Array;
  meta: SpectrumMeta;
}

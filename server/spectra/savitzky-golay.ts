/**
 * Savitzky-Golay smoothing and derivatives (Savitzky & Golay, Anal. Chem. 36:1627,
 * 1964) through ml-savitzky-golay-generalized. The window edges use the package's
 * edge polynomials, so the output has the input's length.
 */
import { sgg } from 'ml-savitzky-golay-generalized';
import type { SmoothingSettings } from './method';

/**
 * Applies the filter to y sampled every `step` cm-1 (ascending x). Derivatives are
 * per cm-1 (divided by step, or step squared for the second derivative).
 */
export function savitzkyGolay(y: Float64Array, step: number, settings: SmoothingSettings): Float64Array {
  return sgg(y, step, {
    windowSize: settings.windowSize,
    polynomial: settings.polynomial,
    derivative: settings.derivative,
  });
}

/** The copy lookup's keys of a spectrum (docs/provenance.md): decoded values hashed, fingerprint, rounding step. Pure. */
import { createHash } from 'node:crypto';
import { fingerprintOf, roundingStep, type Spectrum } from '../../spectra';
import type { ProvenanceKeys } from '../../workers/tasks';

export function provenanceKeys(spectrum: Spectrum): ProvenanceKeys {
  const h = createHash('sha256');
  h.update(new Uint8Array(spectrum.x.buffer, spectrum.x.byteOffset, spectrum.x.byteLength));
  h.update(new Uint8Array(spectrum.y.buffer, spectrum.y.byteOffset, spectrum.y.byteLength));
  return { decodedSha256: h.digest('hex'), fingerprint: fingerprintOf(spectrum), yStep: roundingStep(spectrum.y) };
}

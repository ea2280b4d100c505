/** Interim: the JCAMP-DX path of readSpectrum is being written (see jcamp.ts). */
import { SpectrumError } from './errors';
import type { RawSpectrum } from './assemble';
import type { ReadOptions } from './parse';

export function jcampToRawSpectrum(_text: string, _fileName: string, _options: ReadOptions): RawSpectrum {
  throw new SpectrumError('JCAMP_UNREADABLE', 'JCAMP-DX files cannot be read yet; upload the spectrum as CSV for now.');
}

/**
 * The JCAMP-DX path of readSpectrum: decodes the file strictly (jcamp.ts), then
 * decides whether it is one infrared spectrum and what its units are.
 *
 * Refusals specific to this step:
 *   - ##DATA TYPE is not infrared (NMR, mass, UV/VIS, Raman ...)     JCAMP_NOT_IR
 *   - ##DATA TYPE is missing                                          JCAMP_MISSING_LABEL
 *   - more than one spectrum (several data blocks or NTUPLES pages)   JCAMP_MULTIBLOCK
 *     (an identity test must know which spectrum is the sample, so a
 *      file with several spectra is refused rather than guessed from)
 *   - a peak table instead of a full spectrum                         JCAMP_PEAK_TABLE_ONLY
 *   - ##XUNITS / ##YUNITS missing or not an IR unit                   UNKNOWN_X_UNITS / UNKNOWN_Y_UNITS
 *   - a near-infrared file whose "1/CM" values all lie at or below
 *     2600, where NIR data only occur as wavelengths in nm            X_UNITS_MISMATCH
 *     (NIR in wavenumbers is about 4000-12800 cm-1)
 */
import type { RawSpectrum } from './assemble';
import { SpectrumError } from './errors';
import { decodeJcamp } from './jcamp';
import { statedAcquisition } from './provenance';
import type { ReadOptions } from './parse';
import { fmt, parseXUnitLabel, parseYUnitLabel } from './units';

const IR_TYPE = /INFRARED|\b(IR|NIR|MIR|FTIR|FT-IR)\b/i;
const NIR_TYPE = /NEAR\s*-?\s*INFRARED|\bNIR\b/i;

export function jcampToRawSpectrum(text: string, fileName: string, options: ReadOptions): RawSpectrum {
  let dataType = '';
  const doc = decodeJcamp(text, {
    beforeData: (labels) => {
      dataType = (labels.DATATYPE ?? '').trim();
      if (!dataType) {
        throw new SpectrumError(
          'JCAMP_MISSING_LABEL',
          'The JCAMP-DX file does not state its data type (##DATA TYPE=), so it cannot be confirmed as an infrared spectrum. Export the spectrum again from the IR instrument.',
          { label: '##DATA TYPE=' },
        );
      }
      if (!IR_TYPE.test(dataType)) {
        throw new SpectrumError(
          'JCAMP_NOT_IR',
          `This JCAMP-DX file holds data of type "${dataType}", not an infrared spectrum. Drumline identifies materials by infrared spectroscopy only; upload the IR spectrum of the sample.`,
          { dataType },
        );
      }
      if (/PEAK\s*TABLE/i.test(dataType)) throw peakTable();
    },
  });
  if (doc.dataBlockCount > 1 || doc.pages.length > 1) {
    const count = Math.max(doc.dataBlockCount, doc.pages.length);
    throw new SpectrumError(
      'JCAMP_MULTIBLOCK',
      `This JCAMP-DX file holds ${count} spectra; Drumline needs exactly one spectrum per file so that it is clear which one is the sample. Export the sample spectrum on its own and upload again.`,
      { spectra: count, dataBlocks: doc.dataBlockCount, pages: doc.pages.length },
    );
  }
  const page = doc.pages[0];
  if (page.form === 'PEAK TABLE') throw peakTable();

  const xUnit = page.xUnits.trim() ? parseXUnitLabel(page.xUnits) : (options.xUnits ?? null);
  if (!xUnit) {
    throw new SpectrumError(
      'UNKNOWN_X_UNITS',
      page.xUnits.trim()
        ? `The JCAMP-DX file gives its x units as "${page.xUnits.trim()}", which is not cm-1, nm or um. Export the spectrum again with wavenumbers or wavelengths on the x axis.`
        : 'The JCAMP-DX file does not state its x units (##XUNITS=). Export the spectrum again from the instrument.',
      { xUnits: page.xUnits },
    );
  }
  const yQuantity = page.yUnits.trim() ? parseYUnitLabel(page.yUnits) : (options.yUnits ?? null);
  if (!yQuantity) {
    throw new SpectrumError(
      'UNKNOWN_Y_UNITS',
      page.yUnits.trim()
        ? `The JCAMP-DX file gives its y units as "${page.yUnits.trim()}", which is not absorbance, transmittance or reflectance. Export the spectrum again as absorbance or transmittance.`
        : 'The JCAMP-DX file does not state its y units (##YUNITS=). Export the spectrum again from the instrument.',
      { yUnits: page.yUnits },
    );
  }
  if (xUnit === 'cm-1' && NIR_TYPE.test(dataType) && page.x.length > 0) {
    let hi = -Infinity;
    let lo = Infinity;
    for (const v of page.x) {
      if (v > hi) hi = v;
      if (v < lo) lo = v;
    }
    if (hi <= 2600) {
      throw new SpectrumError(
        'X_UNITS_MISMATCH',
        `This near-infrared file says its x values are in cm-1, but they run from ${fmt(lo)} to ${fmt(hi)}, where near-infrared data only occur as wavelengths in nm. ` +
          'The x units in the export are wrong; export the spectrum again with the correct units.',
        { xUnits: page.xUnits, min: lo, max: hi, dataType },
      );
    }
  }

  const resolution = doc.labels.RESOLUTION !== undefined ? Number.parseFloat(doc.labels.RESOLUTION) : NaN;
  return {
    x: page.x,
    y: page.y,
    xUnit,
    yQuantity,
    meta: {
      title: doc.title.trim() || fileName.replace(/\.[^.]*$/, ''),
      fileName,
      format: 'jcamp-dx',
      originalXUnits: page.xUnits.trim(),
      originalYUnits: page.yUnits.trim(),
      ...(Number.isFinite(resolution) ? { resolution } : {}),
      dataType,
      warnings: [...doc.warnings],
      stated: statedAcquisition(doc.labels),
    },
  };
}

function peakTable(): SpectrumError {
  return new SpectrumError(
    'JCAMP_PEAK_TABLE_ONLY',
    'This JCAMP-DX file holds only a list of peaks, not the full spectrum that an identity test compares. Export the full spectrum (##XYDATA=) and upload again.',
  );
}

export * from './types';
export * from './errors';
export { readSpectrum, type ReadOptions } from './parse';
export { decodeJcamp, type JcampDocument, type JcampPage, type JcampDecodeOptions } from './jcamp';
export { nmToWavenumber, umToWavenumber, transmittanceToAbsorbance, type XUnit, type YQuantity } from './units';

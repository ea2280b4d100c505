export * from './types';
export * from './errors';
export { readSpectrum, type ReadOptions } from './parse';

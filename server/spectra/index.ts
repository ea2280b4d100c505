export * from './types';
export * from './errors';
export { readSpectrum, type ReadOptions } from './parse';
export { decodeJcamp, type JcampDocument, type JcampPage, type JcampDecodeOptions } from './jcamp';
export { nmToWavenumber, umToWavenumber, transmittanceToAbsorbance, type XUnit, type YQuantity } from './units';

// Analysis: method, quality gate, preparation, scoring, bands, explanation,
// instrument check, library search and specificity.
export { ENGINE_VERSION } from './version';
export {
  type Technique,
  type WavenumberRange,
  type ExcludedRegion,
  type BaselineMode,
  type Normalisation,
  type SmoothingSettings,
  type BandTolerance,
  type IdentityThresholds,
  type QualityLimits,
  type DistanceModelSettings,
  type IdentityMethod,
  type SpecificityMargins,
  DEFAULT_SPECIFICITY_MARGINS,
  specificityMarginsOf,
  CO2_REGION,
  DIAMOND_ATR_REGION,
  defaultMidIrAtrMethod,
  defaultNirMethod,
  validateMethod,
  preparationKey,
  gridLength,
  toleranceAt,
} from './method';
export {
  checkQuality,
  measureQuality,
  estimateNoise,
  type QualityReport,
  type QualityProblem,
  type QualityMetrics,
  type QualityCode,
} from './quality';
export { makeGrid, resampleLinear, assertCovers } from './resample';
export { savitzkyGolay } from './savitzky-golay';
export { correctBaseline } from './baseline';
export { normalise } from './normalise';
export { prepare, type PreparedSpectrum } from './preprocess';
export { findPeaks, parabolaVertex, type Peak } from './peaks';
export {
  bandConcordance,
  bandToleranceFor,
  bandToleranceRule,
  referenceBandsFrom,
  type Band,
  type BandRow,
  type ExtraBand,
  type BandConcordance,
} from './bands';
export { pearson, centredUnit } from './correlation';
export {
  scoreAgainst,
  prepareReference,
  scoreReference,
  assertValidMethod,
  type ReferenceInput,
  type PreparedReference,
  type ScoreOptions,
} from './score';
export type { IdentityResult, Criterion, CriterionKey, ReferenceScore, DistanceResult } from './result';
export {
  assignBand,
  describeAssignment,
  shapeOf,
  GROUP_FREQUENCIES,
  GROUP_FREQUENCY_SOURCE,
  type GroupFrequency,
  type BandShape,
} from './group-frequencies';
export { explain, bandMeaning } from './explain';
export { rankCandidates, CANDIDATE_RULES, type RankedCandidate, type SpectrumBand } from './candidates';
export {
  checkPolystyrene,
  locateMaximum,
  PH_EUR_POLYSTYRENE_FT,
  PH_EUR_POLYSTYRENE_MONOCHROMATOR,
  type PolystyreneSpec,
  type PolystyreneBandSpec,
  type PolystyreneOptions,
  type PolystyreneResult,
  type PolystyreneBandResult,
  type ResolutionCheck,
} from './polystyrene';
export {
  buildLibrary,
  searchLibrary,
  correlateAll,
  type Library,
  type LibraryEntry,
  type SearchHit,
  type BuildLibraryOptions,
} from './library';
export { createDotKernel, type DotKernel } from './dot-kernel';
export { specificityMatrix, type SpecificityReport, type SpecificityPair, type MaterialSummary } from './specificity';
export { buildDistanceModel, mahalanobisDistance, type DistanceModel } from './nir';
export { residualQ, residualLimit, leaveOneOutResiduals, type ResidualLimit } from './residual';
export { chiSquareQuantile } from './chi-square';
export {
  checkReferenceModel,
  buildReferenceModel,
  usesReferenceModel,
  type ReferenceModel,
  type ReferenceModelCheck,
} from './reference-model';
export { compareIntensities, DEFAULT_RELATIVE_INTENSITY_TOLERANCE, type BandIntensity } from './intensity';
export {
  COPY_RATIO_LIMIT,
  fingerprintOf,
  lookupWindow,
  roundingStep,
  sameAcquisition,
  statedAcquisition,
  type AcquisitionComparison,
  type SpectrumFingerprint,
  type StatedAcquisition,
} from './provenance';

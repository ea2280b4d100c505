/**
 * What other modules (testing, certificates, work queue) may use from the reference library.
 * See approved-set.ts for the contracts.
 */
export {
  getApprovedReferenceSet,
  getLibraryForMethodGrid,
  searchApprovedLibrary,
  invalidateLibraryCache,
  type ApprovedReference,
  type ApprovedReferenceSet,
  type LibraryHit,
  type MethodGridLibrary,
} from './approved-set';
export { toMethod } from './repo';
export type { MethodVersion, StoredBand } from './contract';
export { irSuitabilityOf, irSuitabilityMap } from './method-control';
export { assertIrSuitable, irSuitabilitySignedContent, overrideSignedContent } from './method-control';
export { getPinnedReferenceSet } from './approved-set';
export { referenceSignedContent } from './references';
export { toReference } from './repo';
export { pickBands, toEngineBands } from './engine';
export { methodSignedContent } from './service';
export { libraryRoutes } from './routes';

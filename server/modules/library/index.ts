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

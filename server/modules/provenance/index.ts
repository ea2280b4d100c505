/** What other modules use of raw-file provenance: fingerprints, copy detection, blocks and hand-overs. */
export { copyRefusal, findCopy, lockAndRecheck, recordFingerprint } from './copies';
export { provenanceKeys } from './keys';
export {
  assertHolder,
  blockedRefusal,
  blockState,
  holderOf,
  identifierFindings,
  identifierRefusal,
  judgeAcquisition,
  zonedToUtc,
} from './rules';
export {
  blockedContainers,
  handOver,
  handOverCandidates,
  measurementHistory,
  releaseBlock,
  releaseSignedContent,
  type HoldChangeWriter,
} from './service';

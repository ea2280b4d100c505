/** What other modules use of raw-file provenance: fingerprints, copy detection, blocks and hand-overs. */
export { copyRefusal, findCopy, lockAndRecheck, recordFingerprint } from './copies';
export {
  assertHolder,
  blockedRefusal,
  blockState,
  identifierFindings,
  identifierRefusal,
  judgeAcquisition,
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

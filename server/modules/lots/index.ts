/** What other modules use of lots and containers: lookups, receipt and the lot's detail. */
export { containersOf, findContainerByLabel, findLot, lockLot } from './repo';
export { getLotDetail, receiveLot } from './service';
export { lotRoutes } from './routes';
export {
  CONTAINER_TRANSITIONS,
  IDENTITY_TRANSITIONS,
  LOT_TRANSITIONS,
  containerTransitionRefusal,
  currentStatuses,
  holdsOf,
  lotTransitionRefusal,
  moveLot,
  recordHoldChange,
  setContainerStatus,
  type LotState,
  type TransitionAudit,
  type TransitionContext,
} from './state';

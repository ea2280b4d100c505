/**
 * What other modules use of lots and containers: lookups, receipt and the state machine. The lot's
 * record page is composed above, in server/modules/lot-record.
 */
export { containersOf, findContainerByLabel, findLot, lockLot } from './repo';
export { receiveLot } from './service';
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

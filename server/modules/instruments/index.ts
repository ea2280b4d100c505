/** What other modules (testing, work queue, integrity, lots) may use from the instrument registry. */
export { getValidInstrumentCheck, checkSignedContent, unusableReason, type ValidInstrumentCheck } from './checks';
export { specSignedContent } from './specifications';
export { backInServiceSignedContent, qualificationSignedContent } from './lifecycle';
export { assessmentSignedContent, lotNotices } from './lookback';
export { requiredCheckTypes } from './repo';
export { toCheck, toSpec } from './repo';
export { instrumentRoutes } from './routes';

/** What other modules (testing, work queue, integrity) may use from the instrument registry. */
export { getValidInstrumentCheck, type ValidInstrumentCheck } from './checks';
export { specSignedContent } from './specifications';

/** What other modules (testing, work queue) may use from the instrument registry. */
export { getValidInstrumentCheck, type ValidInstrumentCheck } from './service';

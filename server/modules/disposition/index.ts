/** What other modules use of disposition: the lots awaiting a decision and retests due (work queue), the signed content of a retest (integrity recipes). */
export { lotsAwaitingDisposition, retestsDue } from './service';
export { retestSignedContent } from './retest';
export { dispositionRoutes } from './routes';

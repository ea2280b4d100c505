/** What other modules use of disposition: the lots awaiting a decision and retests due (work queue). */
export { lotsAwaitingDisposition, retestsDue } from './service';
export { dispositionRoutes } from './routes';

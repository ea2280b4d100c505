/** What other modules use of investigations: opening one on a failed container, closing after a retest. */
export { investigationRowsOfLot } from './repo';
export { closeAfterRetest, openingContent, openInvestigation } from './service';
export { investigationRoutes } from './routes';

/** What other modules use of the audit trail module: CSV lines and the chain checks (docs/architecture.md). */
export { CSV_COLUMNS, csvLine, eventCsvLine } from './csv';
export { checkChain, getChainRun, requestFullCheck, startAnchorJob } from './anchor';
export { auditRoutes } from './routes';

/** What other modules use of identity testing: the signed context of a test and a lot's results. */
export { loadContext, scopesOf, signedContent, underTest } from './context';
export { effectiveResults, latestByContainer } from './outcome';
export { measurementsOfLot, testsOfLot, userNames } from './repo';
export { testingRoutes } from './routes';
export { instrumentStatus } from './instrument-status';
export { verificationQueue } from './views';

/** What other modules use of identity testing: the signed context of a test and a lot's results. */
export { loadContext, scopesOf, signedContent, underTest } from './context';
export { effectiveResults, LABEL_PATTERN, labelsInFileName, latestByContainer } from './outcome';
export { measurementsOfLot, measurementsOfTest, testsOfLot, testStatusOf, userNames } from './repo';
export { addMeasurement, type ProvenanceSettings } from './service';
export { testingRoutes } from './routes';
export { instrumentStatus } from './instrument-status';
export { verificationQueue } from './views';

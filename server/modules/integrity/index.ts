/** What other modules use of the integrity checks: serving checked files and refusing to sign over an alert. */
export {
  assertTestIntact,
  checkCertificateBytes,
  sendCheckedFile,
  startIntegrityJob,
  testIntegrity,
  type FoundBy,
} from './service';
export { integrityRoutes } from './routes';
export { alertSignedContent, useRecipes, type Recipe, type SignatureRow } from './signatures';

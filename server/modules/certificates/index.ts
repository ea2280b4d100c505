/** What other modules use of identity certificates. */
export { issueCertificate, type IssueInput, type IssueOptions } from './service';
export type { CertificateMeta } from './contract';
export { certificateRoutes } from './routes';

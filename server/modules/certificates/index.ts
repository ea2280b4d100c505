/** What other modules use of identity certificates. */
export { issueCertificate, type IssueInput, type IssueOptions, type CertificateMeta } from './service';
export { certificateRoutes } from './routes';

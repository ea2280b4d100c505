/** What other modules use of identity certificates. */
export { failureSentence, issueCertificate, type IssueInput, type IssueOptions } from './issue';
export { pendingCertificates, retryPendingCertificates, startCertificateRetryJob } from './retry';
export type { CertificateMeta, PendingCertificate } from './contract';
export { certificateRoutes } from './routes';

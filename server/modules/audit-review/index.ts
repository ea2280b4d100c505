/** What other modules use of audit-trail reviews: the signed content of a review (integrity recipes). */
export { reviewSignedContent } from './service';
export { auditReviewRoutes } from './routes';

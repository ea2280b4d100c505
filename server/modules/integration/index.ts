/** What other modules use of the ERP/LIMS integration: the outbox of events (written in the change's transaction). */
export { enqueueEvent, startWebhookJob } from './outbox';
export { machineTokenMiddleware } from './tokens';
export { integrationRoutes } from './routes';

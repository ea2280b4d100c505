/**
 * The ERP/LIMS integration's public face: machine tokens and its routes. The outbox of webhook
 * events that other modules write in their change's transaction is server/lib/webhook-outbox.ts.
 */
export { machineTokenMiddleware } from './tokens';
export { integrationRoutes } from './routes';

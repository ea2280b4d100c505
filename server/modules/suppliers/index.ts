/** What other modules use of suppliers: the approved source of a receipt. */
export { sourceForReceipt } from './service';
export { supplierRoutes } from './routes';

/** The system module's public face: its routes and the API reference. */
export { systemRoutes } from './routes';
export { apiReferenceRoutes } from './api-reference';

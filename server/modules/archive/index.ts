/** The archive module's public face: its routes (nothing else is used by other modules). */
export { archiveRoutes } from './routes';

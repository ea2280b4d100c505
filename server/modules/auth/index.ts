/** The sign-in module's public face: its routes (nothing else is used by other modules). */
export { authRoutes } from './routes';

/** The mail module's public face: its routes (the outbox itself is server/lib/mail.ts). */
export { mailRoutes } from './routes';

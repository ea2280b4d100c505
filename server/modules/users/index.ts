/** What other modules use of user accounts and role grants (sign-in, integrity recipes). */
export { findById, findByUsername, toPublicUser, updateUser } from './repo';
export { roleRequestSignedContent } from './grants';
export { userRoutes } from './routes';

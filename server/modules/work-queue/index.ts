/** The work queue module's public face: its route (it reads the other modules through their indexes). */
export { workQueueRoutes } from './routes';
export { workQueueFor } from './service';

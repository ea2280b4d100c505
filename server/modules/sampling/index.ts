/** What other modules use of sampling: which containers were sampled and the container status history. */
export { sampledContainerIds } from './service';
export { samplingRoutes } from './routes';

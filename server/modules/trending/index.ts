/** The trending module's public face: its routes, the trend scan job, and a signal with its points (trend investigations). */
export { trendingRoutes } from './routes';
export { scanTrends, startTrendJob } from './service';
export { findSignal, lockSignal, trendRows } from './repo';

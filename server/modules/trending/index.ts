/** The trending module's public face: its routes and the trend scan job. */
export { trendingRoutes } from './routes';
export { scanTrends, startTrendJob } from './service';

/**
 * The lot record (GET /api/lots/:id and the receipt that answers with it): composed above lots,
 * testing and investigations (docs/architecture.md, "Direction of imports").
 */
export { getLotDetail, receiveLotRecord } from './service';
export { lotRecordRoutes } from './routes';

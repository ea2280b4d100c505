/**
 * The lot record's contract: the receipt it answers and the lot page, declared with the lot's other
 * types in lots' contract (the browser reads them there) and named here for this module.
 */
export { lotCreateSchema, type LotCreate, type LotDetail } from '../lots/contract';

/**
 * Contract of the system routes: health. (The audit chain report is in server/lib/contract.ts,
 * the OpenAPI document is the standard's own shape.) Pure types: the client may import it.
 */

/** GET /api/health: 200 with both "ok", or 503 when the database cannot be reached. */
export type Health = { status: 'ok'; database: 'ok' } | { status: 'degraded'; database: 'down' };

/**
 * Contract of the system routes: health. (The audit chain report is in server/lib/contract.ts,
 * the OpenAPI document is the standard's own shape.) Pure types: the client may import it.
 */

/** GET /api/health: 200 with both "ok", or 503 when the database cannot be reached. */
export type Health = { status: 'ok'; database: 'ok' } | { status: 'degraded'; database: 'down' };

/** GET /api/live: the process answers (no database call); load balancers restart it when this fails. */
export interface Live {
  status: 'live';
  uptimeSeconds: number;
}

/**
 * GET /api/ready: 200 when this server should get traffic: the database answers and holds exactly
 * the migrations this server was built with; 503 otherwise, and while the server shuts down.
 */
export interface Ready {
  status: 'ready' | 'not-ready';
  database: 'ok' | 'down';
  migrations: 'current' | 'behind' | 'ahead' | 'unknown';
  /** Migrations this server knows that the database lacks, or the reverse. */
  missing?: string[];
  unknown?: string[];
  draining?: boolean;
}

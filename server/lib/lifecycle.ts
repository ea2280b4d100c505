/**
 * The process's life cycle as the readiness probe sees it: once a stop was asked for (SIGTERM),
 * GET /api/ready answers 503 so the proxy sends no new requests while those in flight finish
 * (server/index.ts).
 */
let draining = false;

export function startDraining(): void {
  draining = true;
}

export function isDraining(): boolean {
  return draining;
}

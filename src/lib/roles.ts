/** Roles as the server's contract defines them (server/lib/contract.ts), and two helpers of the client. */
export { ROLES, ROLE_LABELS, type Role } from '../../server/lib/contract';
import { ROLE_LABELS, type Role } from '../../server/lib/contract';

export function roleList(roles: readonly Role[]): string {
  return roles.map((r) => ROLE_LABELS[r] ?? r).join(', ');
}

export function hasAnyRole(userRoles: readonly Role[], needed: readonly Role[] | undefined): boolean {
  if (!needed || needed.length === 0) return true;
  return needed.some((r) => userRoles.includes(r));
}

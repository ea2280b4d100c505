/**
 * The signed-in session for pages inside the app shell: useSession() gives the user and site
 * (never null there: the shell renders pages only when someone is signed in).
 * Pass `session.user.signedOnce` to SignatureDialog as needsUsername={!signedOnce}.
 */
import { createContext, useContext } from 'react';
import type { Me } from '../../server/modules/auth/contract';
import { hasAnyRole, type Role } from '../lib/roles';

export const SessionContext = createContext<Me | null>(null);

export function useSession(): Me {
  const s = useContext(SessionContext);
  if (!s) throw new Error('useSession() used outside the signed-in app shell');
  return s;
}

/** true when the signed-in user holds at least one of the roles */
export function useHasRole(...roles: Role[]): boolean {
  return hasAnyRole(useSession().user.roles, roles);
}

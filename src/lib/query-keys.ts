/**
 * Query keys shared across features. The signed-in user (/api/auth/me) is read by the shell and
 * changes when a feature signs something (signedOnce) - such a feature invalidates ME_KEY.
 */
import type { QueryClient } from '@tanstack/react-query';

export const ME_KEY = ['auth', 'me'] as const;

/** Call after any e-signature so the next signing knows the user name was already given. */
export function invalidateMe(qc: QueryClient): Promise<void> {
  return qc.invalidateQueries({ queryKey: ME_KEY });
}

/** The five roles of Drumline and the rules of combining them. Pure data: the client imports this file too. */
export const ROLES = ['operator', 'verifier', 'qa_manager', 'auditor', 'admin'] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_LABELS: Record<Role, string> = {
  operator: 'Operator',
  verifier: 'Verifier',
  qa_manager: 'QA manager',
  auditor: 'Auditor',
  admin: 'Administrator',
};

/**
 * Roles whose grant a second administrator confirms (two-person rule, docs/access.md): QA
 * managers approve references and decide investigations, verifiers sign the second-person
 * review, administrators grant roles.
 */
export const CONFIRMED_ROLES: readonly Role[] = ['qa_manager', 'verifier', 'admin'];

/** A role list in one canonical form (the order of ROLES, no repeats), as stored in the database. */
export function canonicalRoles(roles: readonly Role[]): Role[] {
  return ROLES.filter((r) => roles.includes(r));
}

/** Why a set of roles cannot be held by one account, or null. */
export function roleCombinationProblem(roles: readonly Role[]): string | null {
  if (roles.includes('admin') && roles.length > 1)
    return 'The administrator role cannot be combined with another role: an administrator manages accounts and signs no GMP record. Use a second account for the other work.';
  return null;
}

/**
 * Contract of account administration: request schemas (zod) and the account as the API shows it.
 * Pure data and zod only: the client imports this file too.
 */
import { z } from 'zod';
import { multiLineText, type Role, ROLES, signatureInput, singleLineText } from '../../lib/contract';

const reason = multiLineText().min(3, 'Give a reason (at least 3 characters).').max(1000);
export const userCreateSchema = z.object({
  username: z
    .string()
    .trim()
    .min(3)
    .max(64)
    .regex(/^[a-z0-9._-]+$/, 'Use lower-case letters, digits, dot, dash or underscore.'),
  fullName: singleLineText().min(2).max(120),
  email: z.email().max(200),
  roles: z.array(z.enum(ROLES)).min(1, 'Give the account at least one role.'),
  temporaryPassword: z.string().min(12, 'The password must have at least 12 characters.').max(200),
});
export const userUpdateSchema = z.object({
  fullName: singleLineText().min(2).max(120).optional(),
  email: z.email().max(200).optional(),
  roles: z.array(z.enum(ROLES)).min(1).optional(),
  active: z.boolean().optional(),
  reason,
});
export const unlockSchema = z.object({ reason });
export const resetPasswordSchema = z.object({ temporaryPassword: z.string().min(12).max(200), reason });
export const confirmRoleChangeSchema = z.object({ signature: signatureInput });
export const declineRoleChangeSchema = z.object({ reason });

export type CreateUserInput = z.input<typeof userCreateSchema>;
export type UpdateUserInput = z.input<typeof userUpdateSchema>;

/** A role change that waits for a second administrator (two-person rule, docs/access.md). */
export interface PendingRoleChange {
  requestId: number;
  userId: number;
  rolesBefore: Role[];
  rolesAfter: Role[];
  requestedBy: number;
  requestedByName: string;
  requestedAt: string;
  reason: string;
}

/** GET /api/users/role-changes: a waiting role change with the account it concerns. */
export interface RoleChangeWaiting extends PendingRoleChange {
  username: string;
  fullName: string;
}

/** GET /api/users/directory: what a person picker needs, of active accounts only. */
export interface DirectoryEntry {
  id: number;
  fullName: string;
  username: string;
}

/** An account as administrators see it (never the password hash). */
export interface UserAccount {
  id: number;
  username: string;
  fullName: string;
  email: string;
  roles: Role[];
  mustChangePassword: boolean;
  active: boolean;
  /** ISO time while the account is locked after failed sign-ins, else null */
  lockedUntil: string | null;
  failedAttempts: number;
  createdAt: string;
  /** on the administrator's list and detail: the role change waiting for a second administrator, or null */
  pendingRoleChange?: PendingRoleChange | null;
}

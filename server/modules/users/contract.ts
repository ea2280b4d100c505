/**
 * Contract of account administration: request schemas (zod) and the account as the API shows it.
 * Pure data and zod only: the client imports this file too.
 */
import { z } from 'zod';
import { ROLES, type Role } from '../../lib/contract';

const reason = z.string().trim().min(3, 'Give a reason (at least 3 characters).').max(1000);
export const userCreateSchema = z.object({
  username: z
    .string()
    .trim()
    .min(3)
    .max(64)
    .regex(/^[a-z0-9._-]+$/, 'Use lower-case letters, digits, dot, dash or underscore.'),
  fullName: z.string().trim().min(2).max(120),
  email: z.email().max(200),
  roles: z.array(z.enum(ROLES)).min(1, 'Give the account at least one role.'),
  temporaryPassword: z.string().min(12, 'The password must have at least 12 characters.').max(200),
});
export const userUpdateSchema = z.object({
  fullName: z.string().trim().min(2).max(120).optional(),
  email: z.email().max(200).optional(),
  roles: z.array(z.enum(ROLES)).min(1).optional(),
  active: z.boolean().optional(),
  reason,
});
export const unlockSchema = z.object({ reason });
export const resetPasswordSchema = z.object({ temporaryPassword: z.string().min(12).max(200), reason });

export type CreateUserInput = z.input<typeof userCreateSchema>;
export type UpdateUserInput = z.input<typeof userUpdateSchema>;

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
}

/**
 * Contract of signing in and the session: request schemas (zod) and what GET /api/auth/me
 * answers. Pure data and zod only: the client imports this file too.
 */
import { z } from 'zod';
import { singleLineText } from '../../lib/contract';
import type { Role } from '../../lib/contract';
import type { UserAccount } from '../users/contract';

export const signInSchema = z.object({
  username: singleLineText().min(1, 'Enter your user name.').max(64),
  password: z.string().min(1, 'Enter your password.').max(200),
});
export const changePasswordSchema = z.object({
  currentPassword: z.string().min(1).max(200),
  newPassword: z.string().min(12, 'The new password must have at least 12 characters.').max(200),
});

export type SignInInput = z.infer<typeof signInSchema>;
export type ChangePasswordInput = z.infer<typeof changePasswordSchema>;

export interface SignInResult {
  user: UserAccount;
}

/** The signed-in user as the session knows it. */
export interface SessionUser {
  id: number;
  username: string;
  fullName: string;
  email: string;
  roles: Role[];
  mustChangePassword: boolean;
  /** true once the user has signed something in this session (then a signature asks only the password) */
  signedOnce: boolean;
}

/** Site settings the client needs (name, time zone for dates, idle time-out, development mode). */
export interface SiteInfo {
  name: string;
  timeZone: string;
  idleMinutes: number;
  devMode: boolean;
}

export interface Me {
  user: SessionUser;
  site: SiteInfo;
}

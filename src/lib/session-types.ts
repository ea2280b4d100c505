/** Shape of GET /api/auth/me. */
import type { Role } from './roles';

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

import type { UserAccount } from '../api';

/** Status in words: inactive, locked, must change password, active. */
export function userStatusText(u: UserAccount): string {
  if (!u.active) return 'Inactive';
  if (u.lockedUntil) return 'Locked';
  if (u.mustChangePassword) return 'Must change password';
  return 'Active';
}

export function UserStatus({ user }: { user: UserAccount }) {
  const text = userStatusText(user);
  const style =
    text === 'Inactive'
      ? 'border-line text-muted bg-paper'
      : text === 'Locked'
        ? 'border-fail/40 text-fail bg-fail-soft'
        : text === 'Must change password'
          ? 'border-amber/50 text-amber-ink bg-amber-soft'
          : 'border-pass/40 text-pass bg-pass-soft';
  return (
    <span className={`inline-block rounded border px-1.5 py-0.5 text-xs font-medium whitespace-nowrap ${style}`}>
      {text}
    </span>
  );
}

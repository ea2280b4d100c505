/**
 * The signed-in app shell: header (wordmark, site, user, sign-out), navigation built from
 * routes.tsx filtered by the user's roles, session handling (ended session -> sign-in page with
 * the reason; forced password change), and an error boundary around the page.
 */
import { useEffect, useEffectEvent, useMemo, useRef, useState } from 'react';
import { Link, Navigate, NavLink, Outlet, useLocation, useNavigate } from 'react-router-dom';
import { useQueryClient } from '@tanstack/react-query';
import { useMe, useSignOut } from '../features/auth/api';
import { lastApiActivity, onUnauthorized } from '../lib/api';
import {
  announce,
  clearDrafts,
  isSigningOut,
  leaveNotice,
  markSigningOut,
  onSessionMessage,
  setDraftOwner,
  takeNotice,
} from '../lib/session-sync';
import { setSiteTimeZone } from '../lib/format';
import { qk } from '../lib/query-keys';
import { hasAnyRole, roleList } from '../lib/roles';
import type { Me } from '../../server/modules/auth/contract';
import { ErrorNote } from '../components/ErrorNote';
import { ErrorBoundary } from './error-boundary';
import { PageLoading } from './lazy-page';
import { appRoutes, NAV_GROUP_LABELS, type NavGroup } from './routes';
import { SessionContext } from './session';
import { Wordmark } from './wordmark';

export const PASSWORD_PATH = '/account/password';

export function sessionEndedMessage(minutes: number): string {
  return `Your session ended after ${minutes} minutes without activity. Sign in again to continue.`;
}

/** A session that ended while the tab was active: signed out elsewhere, not idle. */
export const SESSION_GONE_MESSAGE =
  'Your session has ended: you signed out in another tab or window, or an administrator ended it. Sign in again to continue.';

/** Warned this long before the idle sign-out. */
export const IDLE_WARNING_MS = 2 * 60_000;

/** Sends the user to sign-in when the server says the session is gone. */
function useSessionGuard(me: Me | null | undefined) {
  const navigate = useNavigate();
  const location = useLocation();
  const qc = useQueryClient();
  const where = useRef(location.pathname + location.search);
  where.current = location.pathname + location.search;
  const idleMinutes = me?.site.idleMinutes ?? 30;

  useEffect(
    () =>
      onUnauthorized((_path, quietSince) => {
        if (isSigningOut()) return; // this tab's own sign-out: its page says so
        const had = qc.getQueryData<Me | null>(qk.me);
        if (!had) return; // nobody was signed in: the shell redirects without a message
        // Idle expiry only when the tab really was quiet for the idle time; otherwise the session
        // was ended by a sign-out elsewhere (issue 18, item 5).
        const idle = Date.now() - quietSince >= had.site.idleMinutes * 60_000 - 5_000;
        qc.clear();
        qc.setQueryData(qk.me, null);
        navigate('/sign-in', {
          replace: true,
          state: {
            message: idle ? sessionEndedMessage(had.site.idleMinutes) : SESSION_GONE_MESSAGE,
            from: where.current,
          },
        });
      }),
    [navigate, qc],
  );

  // Other tabs of this browser share the session cookie: a sign-in as someone else there makes
  // this tab act as that person, so say so and reload as them; a sign-out there ends this one.
  const myId = me?.user.id ?? null;
  useEffect(() => {
    setDraftOwner(myId);
  }, [myId]);
  useEffect(
    () =>
      onSessionMessage((m) => {
        if (m.type === 'signed-in' && m.userId !== myId) {
          leaveNotice(
            `Another tab of this browser signed in as ${m.fullName} (${m.username}). This tab now works as ${m.fullName}; anything not yet saved here was not sent.`,
          );
          window.location.reload();
        } else if (m.type === 'signed-out' && myId !== null) {
          qc.clear();
          qc.setQueryData(qk.me, null);
          navigate('/sign-in', {
            replace: true,
            state: { message: 'You signed out in another tab of this browser.', from: where.current },
          });
        }
      }),
    [myId, navigate, qc],
  );

  // Moving to another page is activity: when the server has not been asked for a minute (the page
  // may show cached data), ask it now, so an ended session is noticed on the first click.
  const askIfQuiet = useEffectEvent(() => {
    if (me && Date.now() - lastApiActivity() > 60_000) void qc.invalidateQueries({ queryKey: qk.me });
  });
  useEffect(() => askIfQuiet(), [location.pathname]);

  // Without requests the server's idle clock runs out silently; ask it once the time has passed
  // so the screen does not keep showing data of an ended session.
  useEffect(() => {
    if (!me) return;
    const t = window.setInterval(() => {
      if (Date.now() - lastApiActivity() > idleMinutes * 60_000 + 5_000) void qc.invalidateQueries({ queryKey: qk.me });
    }, 30_000);
    return () => window.clearInterval(t);
  }, [me, idleMinutes, qc]);
}

function Nav({ me }: { me: Me }) {
  const groups = useMemo(() => {
    const out = new Map<NavGroup, { path: string; label: string; order: number }[]>();
    for (const r of appRoutes) {
      if (!r.nav || !hasAnyRole(me.user.roles, r.roles)) continue;
      const list = out.get(r.nav.group) ?? [];
      list.push({ path: r.path, label: r.nav.label, order: r.nav.order });
      out.set(r.nav.group, list);
    }
    return (['bench', 'desk', 'admin'] as NavGroup[])
      .filter((g) => out.has(g))
      .map((g) => ({ group: g, items: out.get(g)!.sort((a, b) => a.order - b.order) }));
  }, [me.user.roles]);

  // One item is highlighted at a time: the one whose path matches the page most closely
  // (on /certificates/verify "Verify a certificate", not also "Identity certificates").
  const { pathname } = useLocation();
  const current = useMemo(() => {
    const paths = groups.flatMap((g) => g.items.map((i) => i.path));
    const hits = paths.filter((p) => pathname === p || pathname.startsWith(`${p}/`));
    return hits.sort((a, b) => b.length - a.length)[0] ?? (pathname === '/' ? '/' : null);
  }, [groups, pathname]);
  const linkClass = (path: string) => () =>
    `flex min-h-10 items-center rounded-md px-3 text-sm ${path === current ? 'bg-petrol-soft font-semibold text-petrol' : 'text-ink hover:bg-white'}`;

  return (
    <nav aria-label="Main" className="flex flex-col gap-4">
      <NavLink to="/" end className={linkClass('/')} aria-current={current === '/' ? 'page' : false}>
        Work queue
      </NavLink>
      {groups.map(({ group, items }) => (
        <div key={group}>
          <p className="px-3 pb-1 text-xs font-semibold tracking-wide text-muted uppercase">
            {NAV_GROUP_LABELS[group]}
          </p>
          <ul className="flex flex-col gap-0.5">
            {items.map((i) => (
              <li key={i.path}>
                <NavLink to={i.path} className={linkClass(i.path)} aria-current={i.path === current ? 'page' : false}>
                  {i.label}
                </NavLink>
              </li>
            ))}
          </ul>
        </div>
      ))}
    </nav>
  );
}

function Header({ me, forced }: { me: Me; forced: boolean }) {
  const signOut = useSignOut();
  const navigate = useNavigate();
  const doSignOut = () => {
    markSigningOut(true);
    clearDrafts();
    signOut.mutate(undefined, {
      onSettled: () => {
        announce({ type: 'signed-out', userId: me.user.id });
        navigate('/sign-in', { replace: true, state: { message: 'You have signed out.' } });
        markSigningOut(false);
      },
    });
  };
  return (
    <header className="border-b border-line bg-white">
      <div className="flex flex-wrap items-center justify-between gap-x-6 gap-y-2 px-4 py-2">
        <div className="flex items-center gap-4">
          <Link to="/" className="text-petrol" aria-label="Drumline, work queue">
            <Wordmark />
          </Link>
          <span className="hidden h-6 w-px bg-line sm:block" aria-hidden />
          <span className="text-sm text-muted" data-testid="site-name">
            {me.site.name}
          </span>
          {me.site.devMode && (
            <span className="rounded border border-amber/50 bg-amber-soft px-1.5 py-0.5 text-xs text-amber-ink">
              Development mode
            </span>
          )}
        </div>
        <div className="flex items-center gap-4">
          <div className="text-right leading-tight">
            <p className="text-sm font-medium" data-testid="user-name">
              {me.user.fullName}
            </p>
            <p className="text-xs text-muted" data-testid="user-roles">
              {roleList(me.user.roles)}
              {!forced && (
                <>
                  {' · '}
                  <Link to={PASSWORD_PATH} className="underline underline-offset-2 hover:text-petrol">
                    Change password
                  </Link>
                </>
              )}
            </p>
          </div>
          <button
            type="button"
            onClick={doSignOut}
            disabled={signOut.isPending}
            className="min-h-10 rounded-md border border-line px-3 text-sm font-medium text-ink hover:border-petrol hover:text-petrol"
          >
            Sign out
          </button>
        </div>
      </div>
    </header>
  );
}

/**
 * The notice left by a switch of user in another tab (shown once), and the warning two minutes
 * before the idle sign-out, with "Stay signed in" (a request restarts the server's idle clock).
 */
function SessionNotices({ me }: { me: Me }) {
  const qc = useQueryClient();
  const [notice, setNotice] = useState<string | null>(() => takeNotice());
  const [left, setLeft] = useState<number | null>(null);
  const idleMs = me.site.idleMinutes * 60_000;
  useEffect(() => {
    const tick = () => {
      const remaining = idleMs - (Date.now() - lastApiActivity());
      setLeft(remaining <= IDLE_WARNING_MS && remaining > 0 ? remaining : null);
    };
    tick();
    const t = window.setInterval(tick, 1_000);
    return () => window.clearInterval(t);
  }, [idleMs]);
  const stay = () => {
    setLeft(null);
    void qc.invalidateQueries({ queryKey: qk.me });
  };
  const mmss = (ms: number) => {
    const s = Math.ceil(ms / 1000);
    return `${Math.floor(s / 60)}:${String(s % 60).padStart(2, '0')}`;
  };
  return (
    <>
      {notice && (
        <div
          role="status"
          data-testid="session-notice"
          className="flex items-start justify-between gap-4 border-b border-amber/50 bg-amber-soft px-4 py-2 text-sm text-amber-ink"
        >
          <span>{notice}</span>
          <button type="button" className="underline underline-offset-2" onClick={() => setNotice(null)}>
            Dismiss
          </button>
        </div>
      )}
      {left !== null && (
        <div
          role="alertdialog"
          aria-labelledby="idle-warning-title"
          aria-describedby="idle-warning-text"
          data-testid="idle-warning"
          className="fixed right-4 bottom-4 z-50 flex max-w-sm flex-col gap-2 rounded-md border border-amber/60 bg-white p-4 shadow-lg"
        >
          <h2 id="idle-warning-title" className="text-base font-semibold text-amber-ink">
            You will be signed out soon
          </h2>
          <p id="idle-warning-text" className="text-sm">
            No activity for a while: Drumline signs you out in {mmss(left)}. Text you typed in open forms is kept as a
            draft on this computer until you sign out.
          </p>
          <button
            type="button"
            onClick={stay}
            autoFocus
            className="min-h-11 rounded-md bg-petrol px-4 text-sm font-medium text-white hover:bg-petrol/90"
          >
            Stay signed in
          </button>
        </div>
      )}
    </>
  );
}

export function AppShell() {
  const me = useMe();
  const location = useLocation();
  useSessionGuard(me.data);

  useEffect(() => {
    if (me.data) setSiteTimeZone(me.data.site.timeZone);
  }, [me.data]);

  if (me.isPending)
    return (
      <div className="p-8">
        <PageLoading />
      </div>
    );
  if (me.isError)
    return (
      <div className="mx-auto max-w-xl p-8">
        <ErrorNote error={me.error} title="Drumline cannot reach its server" onRetry={() => void me.refetch()} />
      </div>
    );
  if (!me.data) return <Navigate to="/sign-in" replace state={{ from: location.pathname + location.search }} />;

  setSiteTimeZone(me.data.site.timeZone);
  const forced = me.data.user.mustChangePassword;
  if (forced && location.pathname !== PASSWORD_PATH) return <Navigate to={PASSWORD_PATH} replace />;

  return (
    <SessionContext.Provider value={me.data}>
      <div className="flex min-h-screen flex-col">
        <a
          href="#main"
          className="sr-only focus:not-sr-only focus:absolute focus:left-2 focus:top-2 focus:z-50 focus:bg-white focus:p-2"
        >
          Skip to the page
        </a>
        <Header me={me.data} forced={forced} />
        <SessionNotices me={me.data} />
        <div className="flex flex-1 flex-col md:flex-row">
          {!forced && (
            <aside className="border-b border-line bg-paper px-3 py-4 md:w-52 md:shrink-0 md:border-r md:border-b-0">
              <Nav me={me.data} />
            </aside>
          )}
          <main id="main" className="min-w-0 flex-1 px-4 py-5 md:px-6 2xl:px-8">
            <ErrorBoundary resetKey={location.pathname}>
              <Outlet />
            </ErrorBoundary>
          </main>
        </div>
      </div>
    </SessionContext.Provider>
  );
}

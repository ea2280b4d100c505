/**
 * The signed-in app shell: header (wordmark, site, user, sign-out), navigation built from
 * routes.tsx filtered by the user's roles, session handling (ended session -> sign-in page with
 * the reason; forced password change), and an error boundary around the page.
 */
import { useEffect, useEffectEvent, useMemo, useRef } from 'react';
import { Link, Navigate, NavLink, Outlet, useLocation, useNavigate } from 'react-router-dom';
import { useQueryClient } from '@tanstack/react-query';
import { useMe, useSignOut } from '../features/auth/api';
import { lastApiActivity, onUnauthorized } from '../lib/api';
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
      onUnauthorized(() => {
        const had = qc.getQueryData<Me | null>(qk.me);
        if (!had) return; // nobody was signed in: the shell redirects without a message
        qc.clear();
        qc.setQueryData(qk.me, null);
        navigate('/sign-in', {
          replace: true,
          state: { message: sessionEndedMessage(had.site.idleMinutes), from: where.current },
        });
      }),
    [navigate, qc],
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
  const doSignOut = () =>
    signOut.mutate(undefined, {
      onSettled: () => navigate('/sign-in', { replace: true, state: { message: 'You have signed out.' } }),
    });
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

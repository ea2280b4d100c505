import type { ReactNode } from 'react';
import { createBrowserRouter, Link } from 'react-router-dom';
import { roleList, type Role } from '../lib/roles';
import { RouteError } from './error-boundary';
import { AppShell } from './layout';
import { lazyPage } from './lazy-page';
import { appRoutes } from './routes';
import { useSession } from './session';

/** Shows a plain refusal when the user lacks the page's role (the server refuses the data anyway). */
function RoleGate({ roles, children }: { roles?: Role[]; children: ReactNode }) {
  const { user } = useSession();
  if (roles && roles.length > 0 && !roles.some((r) => user.roles.includes(r)))
    return (
      <div className="max-w-xl rounded-md border border-line bg-white p-5">
        <h1 className="text-lg">This page is not open to your roles</h1>
        <p className="mt-2 text-sm">
          It needs the role {roleList(roles)}. Your account holds: {roleList(user.roles)}. An administrator can change
          roles.
        </p>
        <Link to="/" className="mt-3 inline-block text-sm font-medium text-petrol underline underline-offset-2">
          Go to the work queue
        </Link>
      </div>
    );
  return <>{children}</>;
}

function NotFound() {
  return (
    <div className="max-w-xl rounded-md border border-line bg-white p-5">
      <h1 className="text-lg">There is no page at this address</h1>
      <p className="mt-2 text-sm">Check the address, or start again from the work queue.</p>
      <Link to="/" className="mt-3 inline-block text-sm font-medium text-petrol underline underline-offset-2">
        Go to the work queue
      </Link>
    </div>
  );
}

export const router = createBrowserRouter([
  { path: '/sign-in', element: lazyPage(() => import('../routes/sign-in')), errorElement: <RouteError /> },
  {
    element: <AppShell />,
    errorElement: <RouteError />,
    children: [
      ...appRoutes.map((r) => ({ path: r.path, element: <RoleGate roles={r.roles}>{r.element}</RoleGate> })),
      { path: '*', element: <NotFound /> },
    ],
  },
]);

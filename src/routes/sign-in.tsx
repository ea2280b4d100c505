import { Navigate, useLocation, useNavigate } from 'react-router-dom';
import { Wordmark } from '../app/wordmark';
import { useMe } from '../features/auth/api';
import { SignInForm } from '../features/auth/components/SignInForm';

interface SignInState {
  message?: string;
  from?: string;
}

export default function SignInPage() {
  const me = useMe();
  const navigate = useNavigate();
  const state = (useLocation().state ?? {}) as SignInState;
  const target = state.from && state.from.startsWith('/') && !state.from.startsWith('/sign-in') ? state.from : '/';

  if (me.data && !me.isFetching)
    return <Navigate to={me.data.user.mustChangePassword ? '/account/password' : target} replace />;

  return (
    <div className="flex min-h-screen items-center justify-center bg-paper px-4 py-10">
      <main className="w-full max-w-sm">
        <div className="mb-6 text-petrol">
          <Wordmark />
          <p className="mt-2 text-sm text-muted">Identity testing of incoming materials by infrared spectroscopy.</p>
        </div>
        <div className="rounded-lg border border-line bg-white p-6 shadow-sm">
          <h1 className="mb-4 text-xl">Sign in</h1>
          {state.message && (
            <p
              role="status"
              className="mb-4 rounded-md border border-amber/50 bg-amber-soft px-3 py-2 text-sm text-ink"
            >
              {state.message}
            </p>
          )}
          <SignInForm
            onSignedIn={(u) => navigate(u.mustChangePassword ? '/account/password' : target, { replace: true })}
          />
        </div>
        <p className="mt-4 text-xs text-muted">
          Your sign-in is personal. Every action you take is recorded in the audit trail under your name. Results
          support, and do not replace, the laboratory&apos;s validated procedure.
        </p>
      </main>
    </div>
  );
}

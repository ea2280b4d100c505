/** Catches a page that crashed and says so in plain words; the rest of the app keeps working. */
import { Component, type ErrorInfo, type ReactNode } from 'react';
import { isRouteErrorResponse, Link, useRouteError } from 'react-router-dom';

interface Props {
  children: ReactNode;
  /** changing this key (e.g. the location) clears the error */
  resetKey?: string;
}
interface State {
  error: Error | null;
}

function CrashNote({ detail }: { detail?: string }) {
  return (
    <div role="alert" className="mx-auto max-w-xl rounded-md border border-fail/40 bg-white p-5">
      <h2 className="text-lg text-fail">This page stopped working</h2>
      <p className="mt-2 text-sm">
        Something unexpected happened while showing this page. Nothing you saved before is lost. Reload the page; if it
        happens again, tell the system administrator what you were doing.
      </p>
      {detail && <p className="mt-2 text-xs text-muted">Technical detail: {detail}</p>}
      <div className="mt-4 flex gap-3 text-sm">
        <button
          type="button"
          className="font-medium text-petrol underline underline-offset-2"
          onClick={() => window.location.reload()}
        >
          Reload the page
        </button>
        <Link to="/" className="font-medium text-petrol underline underline-offset-2">
          Go to the work queue
        </Link>
      </div>
    </div>
  );
}

export class ErrorBoundary extends Component<Props, State> {
  override state: State = { error: null };
  static getDerivedStateFromError(error: Error): State {
    return { error };
  }
  override componentDidCatch(error: Error, info: ErrorInfo) {
    console.error('[page error]', error, info.componentStack);
  }
  override componentDidUpdate(prev: Props) {
    if (prev.resetKey !== this.props.resetKey && this.state.error) this.setState({ error: null });
  }
  override render() {
    if (this.state.error) return <CrashNote detail={this.state.error.message} />;
    return this.props.children;
  }
}

/** errorElement for the router (a failed lazy import, a thrown response). */
export function RouteError() {
  const e = useRouteError();
  const detail = isRouteErrorResponse(e) ? `${e.status} ${e.statusText}` : e instanceof Error ? e.message : undefined;
  return (
    <div className="p-8">
      <CrashNote detail={detail} />
    </div>
  );
}

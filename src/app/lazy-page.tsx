/** Code-split pages: element: lazyPage(() => import('../routes/my-page')) (the module's default export). */
import { lazy, Suspense, type ComponentType } from 'react';

export function PageLoading() {
  return (
    <div role="status" className="flex items-center gap-2 py-10 text-muted">
      <span
        aria-hidden
        className="inline-block size-4 animate-spin rounded-full border-2 border-petrol border-r-transparent"
      />
      Loading…
    </div>
  );
}

const RELOAD_FLAG = 'drumline.chunk-reload';

/**
 * After a new version is installed, an open tab asks for page files that no longer exist: reload
 * once to get the new version (the flag stops a reload loop; a second failure shows the error page).
 */
function reloadOnceOnFailure<T>(load: () => Promise<T>): () => Promise<T> {
  return () =>
    load().then(
      (m) => {
        sessionStorage.removeItem(RELOAD_FLAG);
        return m;
      },
      (e: unknown) => {
        if (!sessionStorage.getItem(RELOAD_FLAG)) {
          sessionStorage.setItem(RELOAD_FLAG, '1');
          window.location.reload();
          return new Promise<T>(() => {});
        }
        throw e;
      },
    );
}

export function lazyPage(load: () => Promise<{ default: ComponentType }>) {
  const Page = lazy(reloadOnceOnFailure(load));
  return (
    <Suspense fallback={<PageLoading />}>
      <Page />
    </Suspense>
  );
}

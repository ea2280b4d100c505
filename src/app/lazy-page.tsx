/** Code-split pages: element: lazyPage(() => import('../routes/my-page')) (the module's default export). */
import { lazy, Suspense, type ComponentType } from 'react';

export function PageLoading() {
  return (
    <div role="status" className="flex items-center gap-2 py-10 text-muted">
      <span aria-hidden className="inline-block size-4 animate-spin rounded-full border-2 border-petrol border-r-transparent" />
      Loading…
    </div>
  );
}

export function lazyPage(load: () => Promise<{ default: ComponentType }>) {
  const Page = lazy(load);
  return (
    <Suspense fallback={<PageLoading />}>
      <Page />
    </Suspense>
  );
}

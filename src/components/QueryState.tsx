/**
 * What a screen shows for a query: the loading sign while it runs, the error with a retry when it
 * failed, a sentence when the list came back empty, else what `children` makes of the data.
 */
import type { ReactNode } from 'react';
import type { UseQueryResult } from '@tanstack/react-query';
import { ErrorNote } from './ErrorNote';

export interface QueryStateProps<T, E> {
  query: UseQueryResult<T, E>;
  /** shown while the query runs */
  loading: ReactNode;
  /** shown instead of `children` when the data is an empty list (leave out to hand it on) */
  empty?: ReactNode;
  children: (data: T) => ReactNode;
}

export function QueryState<T, E>({ query, loading, empty, children }: QueryStateProps<T, E>) {
  if (query.isPending) return loading;
  if (query.isError) return <ErrorNote error={query.error} onRetry={() => void query.refetch()} />;
  if (empty !== undefined && Array.isArray(query.data) && query.data.length === 0) return empty;
  return children(query.data);
}

import { infiniteQueryOptions, useInfiniteQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { RowState } from '../types';
import type { BatchRowsPage } from '../../../lib/api/types';

export const ROWS_PAGE = 500;

export function getBatchRows(id: number, p: { state?: RowState; offset: number; limit: number }) {
  const qs = new URLSearchParams({ offset: String(p.offset), limit: String(p.limit) });
  if (p.state) qs.set('state', p.state);
  return api.get<BatchRowsPage>(`/batches/${id}/rows?${qs}`);
}

/** Rows of a checked batch, a page at a time (the table asks for the next page as it scrolls). */
export const batchRowsQueryOptions = (id: number, state?: RowState) =>
  infiniteQueryOptions({
    queryKey: ['intake', 'rows', id, state ?? 'all'],
    queryFn: ({ pageParam }) => getBatchRows(id, { state, offset: pageParam, limit: ROWS_PAGE }),
    initialPageParam: 0,
    getNextPageParam: (last, pages) => {
      const loaded = pages.reduce((n, pg) => n + pg.rows.length, 0);
      return loaded < last.total && last.rows.length > 0 ? loaded : undefined;
    },
  });

export const useBatchRows = (id: number, state: RowState | undefined, enabled: boolean) =>
  useInfiniteQuery({ ...batchRowsQueryOptions(id, state), enabled });

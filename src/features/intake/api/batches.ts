import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { BatchState } from '../types';
import type { BatchList } from '../../../lib/api/types';

export interface BatchListParams {
  state?: BatchState | '';
  limit: number;
  offset: number;
}

/** Observers get only their own batches; curators and admins get everyone's. */
export function getBatches(p: BatchListParams) {
  const qs = new URLSearchParams({ limit: String(p.limit), offset: String(p.offset) });
  if (p.state) qs.set('state', p.state);
  return api.get<BatchList>(`/batches?${qs}`);
}

export const batchesQueryOptions = (p: BatchListParams) =>
  queryOptions({
    queryKey: ['intake', 'batches', p],
    queryFn: () => getBatches(p),
    placeholderData: keepPreviousData,
    // keep the list moving while any batch on it is still being checked
    refetchInterval: (q) => (q.state.data?.batches.some((b) => b.state === 'checking' || b.state === 'received') ? 2000 : false),
  });

export const useBatches = (p: BatchListParams) => useQuery(batchesQueryOptions(p));

import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../apiClient';
import type { Batch, BatchState } from './types';

/** States in which the server is still working on the file; the page polls while in them (and while a large decision settles). */
export const WORKING_STATES: readonly BatchState[] = ['received', 'checking'];
export const POLL_MS = 700;

export const getBatch = (id: number) => api.get<Batch>(`/batches/${id}`);

export const batchQueryOptions = (id: number) =>
  queryOptions({
    queryKey: ['intake', 'batch', id],
    queryFn: () => getBatch(id),
    refetchInterval: (q) => (q.state.data && (WORKING_STATES.includes(q.state.data.state) || q.state.data.settling) ? POLL_MS : false),
  });

export const useBatch = (id: number | null) => useQuery({ ...batchQueryOptions(id ?? 0), enabled: id !== null && id > 0 });

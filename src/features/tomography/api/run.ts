import { queryOptions, useQuery, useQueryClient } from '@tanstack/react-query';
import { useEffect, useRef } from 'react';
import { api } from '../../../lib/apiClient';
import { WORKING_RUN_STATES, type Run } from '../types';
import { RUNS_KEY } from './runs';

export const RUN_POLL_MS = 600;

export const getRun = (id: number) => api.get<Run>(`/tomography/runs/${id}`);

export const runQueryOptions = (id: number) =>
  queryOptions({
    queryKey: [...RUNS_KEY, 'one', id],
    queryFn: () => getRun(id),
    refetchInterval: (q) => (q.state.data && WORKING_RUN_STATES.includes(q.state.data.state) ? RUN_POLL_MS : false),
  });

/**
 * One run, polled while it is queued or running. `initial` (the run as the list or a start
 * answer gave it) shows at once; when the run leaves the working states the list is refreshed.
 */
export function useRun(id: number, initial?: Run, enabled = true) {
  const qc = useQueryClient();
  const q = useQuery({ ...runQueryOptions(id), initialData: initial, initialDataUpdatedAt: 0, enabled });
  const state = q.data?.state;
  const was = useRef(state);
  useEffect(() => {
    if (was.current && WORKING_RUN_STATES.includes(was.current) && state && !WORKING_RUN_STATES.includes(state)) {
      qc.invalidateQueries({ queryKey: [...RUNS_KEY, 'list'] });
    }
    was.current = state;
  }, [qc, state]);
  return q;
}

import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import { WORKING_RUN_STATES, type Run } from '../types';
import type { RunList } from '../../../lib/api/types';

export const RUNS_KEY = ['tomography', 'runs'] as const;
export const RUNS_POLL_MS = 2000;

/** Every run, newest first (the server keeps the last 100 in the list). */
export const getRuns = () => api.get<RunList>('/tomography/runs');

export const runsQueryOptions = () =>
  queryOptions({
    queryKey: [...RUNS_KEY, 'list'],
    queryFn: getRuns,
    // the list stays fresh while any run on it is still working; each working run is polled faster on its own (run.ts)
    refetchInterval: (q) => (q.state.data?.runs.some((r) => WORKING_RUN_STATES.includes(r.state)) ? RUNS_POLL_MS : false),
  });

export const useRuns = () => useQuery(runsQueryOptions());

/** The run a map or sightline shows when none is asked for: the latest finished one. */
export const latestFinished = (runs: Run[] | undefined) => runs?.filter((r) => r.state === 'done').sort((a, b) => b.id - a.id)[0];

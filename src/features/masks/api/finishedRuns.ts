import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';

export interface RunSummary {
  id: number;
  state: string;
  params: { nside: number; coordsys: 'G' | 'C'; band: string };
  finishedAt: string | null;
}

/** Tomography runs, for choosing which one a mask comes from (only finished runs can). */
export const getRuns = () => api.get<{ runs: RunSummary[] }>('/tomography/runs');
export const finishedRunsQueryOptions = () => queryOptions({ queryKey: ['masks', 'runs'], queryFn: getRuns, select: (d) => d.runs.filter((r) => r.state === 'done') });
export const useFinishedRuns = () => useQuery(finishedRunsQueryOptions());

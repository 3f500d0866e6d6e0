import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { Run, RunList } from '../../../lib/api/types';

/** A run as the mask form lists it. */
export type RunSummary = Run;

/** Tomography runs, for choosing which one a mask comes from (only finished runs can). */
export const getRuns = () => api.get<RunList>('/tomography/runs');
export const finishedRunsQueryOptions = () => queryOptions({ queryKey: ['masks', 'runs'], queryFn: getRuns, select: (d) => d.runs.filter((r) => r.state === 'done') });
export const useFinishedRuns = () => useQuery(finishedRunsQueryOptions());

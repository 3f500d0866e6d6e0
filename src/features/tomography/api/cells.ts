import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { RunCells } from '../types';

/** Every cell of a finished run, compact, for the sky map. A run's cells never change once stored. */
export const getRunCells = (runId: number) => api.get<RunCells>(`/tomography/runs/${runId}/cells`);

export const runCellsQueryOptions = (runId: number) =>
  queryOptions({ queryKey: ['tomography', 'cells', runId], queryFn: () => getRunCells(runId), staleTime: Infinity });

export const useRunCells = (runId: number | undefined) => useQuery({ ...runCellsQueryOptions(runId ?? 0), enabled: !!runId });

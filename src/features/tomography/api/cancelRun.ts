import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { Run } from '../types';
import { RUNS_KEY } from './runs';
import { runQueryOptions } from './run';

/** Cancel a queued or running run (curator, admin). A running one stops after its current cells. */
export const cancelRun = (id: number) => api.post<Run>(`/tomography/runs/${id}/cancel`);

export function useCancelRun() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: cancelRun,
    onSuccess: (run) => {
      qc.setQueryData(runQueryOptions(run.id).queryKey, run);
      qc.invalidateQueries({ queryKey: [...RUNS_KEY] });
    },
  });
}

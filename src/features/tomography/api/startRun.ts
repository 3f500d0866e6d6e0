import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { RunRequest } from '../../../lib/api/types';
import type { Run } from '../types';
import { RUNS_KEY, runsQueryOptions } from './runs';
import { runQueryOptions } from './run';

/** The body of POST /tomography/runs: every parameter, the cone only when the run is limited to one. */
export type StartRunInput = RunRequest;

/** Start a run (curator, admin); the server answers 202 with the queued run. */
export const startRun = (input: StartRunInput) => {
  const { region, ...rest } = input;
  return api.post<Run>('/tomography/runs', region ? { ...rest, region } : rest);
};

export function useStartRun() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: startRun,
    onSuccess: (run) => {
      qc.setQueryData(runQueryOptions(run.id).queryKey, run);
      qc.setQueryData(runsQueryOptions().queryKey, (old) => (old ? { runs: [run, ...old.runs.filter((r) => r.id !== run.id)] } : old));
      qc.invalidateQueries({ queryKey: [...RUNS_KEY, 'list'] });
    },
  });
}

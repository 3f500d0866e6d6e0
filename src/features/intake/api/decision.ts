import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { Batch, BatchDecisionRecord } from '../../../lib/api/types';

export type { BatchDecisionRecord, BatchRef } from '../../../lib/api/types';



export const getBatchDecision = (batchId: number) => api.get<BatchDecisionRecord>(`/batches/${batchId}/decision`);
export const batchDecisionQueryOptions = (batchId: number) => queryOptions({ queryKey: ['review', 'decision', batchId], queryFn: () => getBatchDecision(batchId) });
export const useBatchDecision = (batchId: number) => useQuery(batchDecisionQueryOptions(batchId));

/** Send a corrected file (a new upload), then link it to the returned batch it replaces. */
export async function sendCorrectedFile({ returnedId, file, instrument }: { returnedId: number; file: File; instrument: string | null }) {
  const form = new FormData();
  if (instrument) form.append('instrument', instrument);
  form.append('file', file, file.name);
  const created = await api.post<Batch>('/batches', form);
  return api.post<BatchDecisionRecord>(`/batches/${created.id}/replaces`, { batchId: returnedId });
}

export function useSendCorrectedFile() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: sendCorrectedFile,
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: ['review', 'decision'] });
      void qc.invalidateQueries({ queryKey: ['batches'] });
    },
  });
}

import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';

export interface BatchRef {
  id: number;
  filename: string;
  state: string;
}

export interface BatchDecisionRecord {
  batchId: number;
  state: string;
  decision: 'approved' | 'returned' | null;
  note: string | null;
  reviewedAt: string | null;
  reviewedBy: { name: string } | null;
  counts: Record<'approved' | 'rejected' | 'withdrawn' | 'conflict' | 'ambiguous' | 'pending', number>;
  replaces: BatchRef | null;
  replacedBy: BatchRef[];
}

export const getBatchDecision = (batchId: number) => api.get<BatchDecisionRecord>(`/batches/${batchId}/decision`);
export const batchDecisionQueryOptions = (batchId: number) => queryOptions({ queryKey: ['review', 'decision', batchId], queryFn: () => getBatchDecision(batchId) });
export const useBatchDecision = (batchId: number) => useQuery(batchDecisionQueryOptions(batchId));

/** Send a corrected file (a new upload), then link it to the returned batch it replaces. */
export async function sendCorrectedFile({ returnedId, file, instrument }: { returnedId: number; file: File; instrument: string | null }) {
  const form = new FormData();
  if (instrument) form.append('instrument', instrument);
  form.append('file', file, file.name);
  const created = await api.post<{ id: number }>('/batches', form);
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

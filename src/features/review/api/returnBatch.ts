import { useMutation, useQueryClient, type QueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import { batchQueryOptions } from '../../../lib/api/batch';
import type { BatchDecisionAnswer } from '../types';
import { batchMeasurementsKey } from './measurements';

/** Return a whole batch to its uploader: every pending measurement becomes rejected; held ones stay held. */
export const returnBatch = ({ batchId, note }: { batchId: number; note?: string }) => api.post<BatchDecisionAnswer>(`/batches/${batchId}/reject`, note ? { note } : {});

export function invalidateAfterDecision(qc: QueryClient, batchId: number) {
  void qc.invalidateQueries({ queryKey: batchQueryOptions(batchId).queryKey });
  void qc.invalidateQueries({ queryKey: ['intake', 'batches'] });
  void qc.invalidateQueries({ queryKey: ['intake', 'rows', batchId] });
  void qc.invalidateQueries({ queryKey: ['review', 'queue'] });
  void qc.invalidateQueries({ queryKey: batchMeasurementsKey(batchId) });
  void qc.invalidateQueries({ queryKey: ['review', 'history'] });
  void qc.invalidateQueries({ queryKey: ['catalog'] });
}

export function useReturnBatch() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: returnBatch, onSuccess: (d) => invalidateAfterDecision(qc, d.id) });
}

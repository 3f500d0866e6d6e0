import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { BatchDecisionAnswer } from '../types';
import { invalidateAfterDecision } from './returnBatch';

/** Approve a whole batch: every pending measurement becomes approved; held ones stay held. */
export const approveBatch = ({ batchId, note }: { batchId: number; note?: string }) => api.post<BatchDecisionAnswer>(`/batches/${batchId}/approve`, note ? { note } : {});

export function useApproveBatch() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: approveBatch, onSuccess: (d) => invalidateAfterDecision(qc, d.id) });
}

import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import { batchMeasurementsKey } from './measurements';
import type { OperationAnswer } from '../../../lib/api/types';

/** Approve chosen measurements; held ones (conflict, ambiguous) are refused with 409 and details.ids. */
export const approveMeasurements = ({ ids, reason }: { ids: number[]; reason?: string }) => api.post<OperationAnswer<'/measurements/approve', 'post'>>('/measurements/approve', { ids, ...(reason ? { reason } : {}) });

export function useApproveMeasurements(batchId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: approveMeasurements,
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: batchMeasurementsKey(batchId) });
      void qc.invalidateQueries({ queryKey: ['review', 'history'] });
    },
  });
}

import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import { batchMeasurementsKey } from './measurements';
import type { OperationAnswer } from '../../../lib/api/types';

export const rejectMeasurements = ({ ids, reason }: { ids: number[]; reason?: string }) => api.post<OperationAnswer<'/measurements/reject', 'post'>>('/measurements/reject', { ids, ...(reason ? { reason } : {}) });

export function useRejectMeasurements(batchId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: rejectMeasurements,
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: batchMeasurementsKey(batchId) });
      void qc.invalidateQueries({ queryKey: ['review', 'history'] });
    },
  });
}

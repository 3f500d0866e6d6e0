import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import { batchMeasurementsKey } from './measurements';

export const rejectMeasurements = ({ ids, reason }: { ids: number[]; reason?: string }) => api.post<{ changed: number }>('/measurements/reject', { ids, ...(reason ? { reason } : {}) });

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

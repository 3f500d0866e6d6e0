import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import { batchMeasurementsKey } from './measurements';

/** keep: which of two conflicting values stays; starId / newStar: where an ambiguous match goes. */
export type Resolution = { keep: 'this' | 'other' } | { starId: number } | { newStar: true; name?: string };

export const resolveMeasurement = ({ id, resolution, reason }: { id: number; resolution: Resolution; reason?: string }) =>
  api.post<unknown>(`/measurements/${id}/resolve`, { ...resolution, ...(reason ? { reason } : {}) });

export function useResolveMeasurement(batchId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: resolveMeasurement,
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: batchMeasurementsKey(batchId) });
      void qc.invalidateQueries({ queryKey: ['review', 'history'] });
      void qc.invalidateQueries({ queryKey: ['catalog'] });
    },
  });
}

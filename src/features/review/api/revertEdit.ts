import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { StoredMeasurement } from '../types';
import { patchCachedRow, rowPatchFromStored } from './cache';
import { measurementHistoryQueryOptions } from './history';

export const revertEdit = ({ auditId, reason }: { auditId: number; measurementId: number; reason?: string }) =>
  api.post<{ measurement: StoredMeasurement }>(`/audit/${auditId}/revert`, reason ? { reason } : {});

/** Write an edit's old values back (the server records the revert as an edit of its own). */
export function useRevertEdit(batchId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: revertEdit,
    onSuccess: ({ measurement }) => patchCachedRow(qc, batchId, measurement.id, () => rowPatchFromStored(measurement)),
    onSettled: (_d, _e, v) => {
      void qc.invalidateQueries({ queryKey: measurementHistoryQueryOptions(v.measurementId).queryKey });
      void qc.invalidateQueries({ queryKey: ['catalog', 'star'] });
    },
  });
}

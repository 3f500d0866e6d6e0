import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import { patchCachedRow, rowPatchFromStored } from './cache';
import { measurementHistoryQueryOptions } from './history';
import type { OperationAnswer } from '../../../lib/api/types';

export const revertEdit = ({ auditId, reason }: { auditId: number; measurementId: number; reason?: string }) =>
  api.post<OperationAnswer<'/audit/{id}/revert', 'post'>>(`/audit/${auditId}/revert`, reason ? { reason } : {});

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

import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import { invalidateAfterCalibration } from './applyCalibration';

export const revertCalibration = ({ batchId, reason }: { batchId: number; reason?: string }) =>
  api.post<{ batchId: number; reverted: number[]; rowsRestored: number }>(`/batches/${batchId}/calibration/revert`, reason ? { reason } : {});

export function useRevertCalibration() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: revertCalibration, onSuccess: (d) => invalidateAfterCalibration(qc, d.batchId) });
}

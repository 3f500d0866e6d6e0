import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { CalibrationReverted } from '../../../lib/api/types';
import { invalidateAfterCalibration } from './applyCalibration';

export const revertCalibration = ({ batchId, reason }: { batchId: number; reason?: string }) =>
  api.post<CalibrationReverted>(`/batches/${batchId}/calibration/revert`, reason ? { reason } : {});

export function useRevertCalibration() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: revertCalibration, onSuccess: (d) => invalidateAfterCalibration(qc, d.batchId) });
}

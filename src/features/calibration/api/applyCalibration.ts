import { useMutation, useQueryClient, type QueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { CalibrationApplied } from '../../../lib/api/types';

export type ApplyResult = CalibrationApplied;

export const applyCalibration = ({ batchId, reason }: { batchId: number; reason?: string }) => api.post<ApplyResult>(`/batches/${batchId}/calibration/apply`, reason ? { reason } : {});

/** The batch's calibration, its measurements and every instrument history change together. */
export function invalidateAfterCalibration(qc: QueryClient, batchId: number) {
  void qc.invalidateQueries({ queryKey: ['calibration'] });
  void qc.invalidateQueries({ queryKey: ['review', 'measurements', batchId] });
}

export function useApplyCalibration() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: applyCalibration, onSuccess: (d) => invalidateAfterCalibration(qc, d.batchId) });
}

import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { BatchCalibration } from '../types';

export const batchCalibrationKey = (batchId: number) => ['calibration', 'batch', batchId] as const;
export const getBatchCalibration = (batchId: number) => api.get<BatchCalibration>(`/batches/${batchId}/calibration`);
export const batchCalibrationQueryOptions = (batchId: number) => queryOptions({ queryKey: batchCalibrationKey(batchId), queryFn: () => getBatchCalibration(batchId) });
export const useBatchCalibration = (batchId: number) => useQuery(batchCalibrationQueryOptions(batchId));

import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { MeasurementHistory } from '../../../lib/api/types';

export const getMeasurementHistory = (id: number) => api.get<MeasurementHistory>(`/measurements/${id}/history`);

export const measurementHistoryQueryOptions = (id: number) =>
  queryOptions({ queryKey: ['review', 'history', id], queryFn: () => getMeasurementHistory(id) });

export const useMeasurementHistory = (id: number | null) => useQuery({ ...measurementHistoryQueryOptions(id ?? 0), enabled: id !== null });

import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../apiClient';
import type { PlausibilitySettings } from './types';

export const getPlausibility = () => api.get<PlausibilitySettings>('/plausibility');
export const plausibilityQueryOptions = () => queryOptions({ queryKey: ['calibration', 'plausibility'], queryFn: getPlausibility, staleTime: 60_000 });
export const usePlausibility = () => useQuery(plausibilityQueryOptions());

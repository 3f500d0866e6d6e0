import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';

export interface Overview {
  survey: string;
  counts: { stars: number; instruments: number };
  instruments: { code: string; name: string; bands: string[] }[];
}

export const getOverview = () => api.get<Overview>('/overview');
export const overviewQueryOptions = () => queryOptions({ queryKey: ['overview'], queryFn: getOverview });
export const useOverview = () => useQuery(overviewQueryOptions());

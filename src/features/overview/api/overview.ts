import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';

export interface Overview {
  survey: string;
  counts: { stars: number; instruments: number };
  instruments: { code: string; name: string; bands: string[] }[];
  /** what waits for the signed-in person (an observer: their own batches only) */
  todo?: { kind: string; count: number; text: string; link: string }[];
}

export const getOverview = () => api.get<Overview>('/overview');
export const overviewQueryOptions = () => queryOptions({ queryKey: ['overview'], queryFn: getOverview });
export const useOverview = () => useQuery(overviewQueryOptions());

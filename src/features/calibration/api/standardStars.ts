import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { StandardStarList } from '../../../lib/api/types';
import type { StandardStar } from '../types';

export const getStandardStars = () => api.get<StandardStarList>('/standard-stars');
export const standardStarsQueryOptions = () => queryOptions({ queryKey: ['calibration', 'standards'], queryFn: getStandardStars });
export const useStandardStars = () => useQuery(standardStarsQueryOptions());

export interface NewStandard {
  name: string;
  band: string;
  pPct: number;
  pErr?: number;
  thetaDeg?: number | null;
  thetaErrDeg?: number;
  raDeg?: number;
  decDeg?: number;
  source: string;
  fromMemory?: boolean;
  note?: string;
}

export const addStandardStar = (body: NewStandard) => api.post<StandardStar>('/standard-stars', body as unknown as Record<string, unknown>);

export function useAddStandardStar() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: addStandardStar, onSuccess: () => qc.invalidateQueries({ queryKey: ['calibration', 'standards'] }) });
}

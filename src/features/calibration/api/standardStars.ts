import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { StandardStarList, StandardStarRequest } from '../../../lib/api/types';
import type { StandardStar } from '../types';

export const getStandardStars = () => api.get<StandardStarList>('/standard-stars');
export const standardStarsQueryOptions = () => queryOptions({ queryKey: ['calibration', 'standards'], queryFn: getStandardStars });
export const useStandardStars = () => useQuery(standardStarsQueryOptions());

/** The body of POST /standard-stars (p in percent as pPct, or as a fraction p). */
export type NewStandard = StandardStarRequest;

export const addStandardStar = (body: NewStandard) => api.post<StandardStar>('/standard-stars', body);

export function useAddStandardStar() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: addStandardStar, onSuccess: () => qc.invalidateQueries({ queryKey: ['calibration', 'standards'] }) });
}

import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { StarDetail } from '../types';

export const getStar = (id: number) => api.get<StarDetail>(`/stars/${id}`);

export const starQueryOptions = (id: number) => queryOptions({ queryKey: ['catalog', 'star', id], queryFn: () => getStar(id) });

export const useStar = (id: number) => useQuery({ ...starQueryOptions(id), enabled: id > 0 });

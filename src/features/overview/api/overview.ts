import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { Overview } from '../../../lib/api/types';

export type { Overview } from '../../../lib/api/types';

export const getOverview = () => api.get<Overview>('/overview');
export const overviewQueryOptions = () => queryOptions({ queryKey: ['overview'], queryFn: getOverview });
export const useOverview = () => useQuery(overviewQueryOptions());

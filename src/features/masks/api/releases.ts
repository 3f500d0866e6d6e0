import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { ReleaseList } from '../../../lib/api/types';

export type { Release } from '../../../lib/api/types';

export const getReleases = () => api.get<ReleaseList>('/releases');
export const releasesQueryOptions = () => queryOptions({ queryKey: ['releases'], queryFn: getReleases });
export const useReleases = () => useQuery(releasesQueryOptions());

import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';

export interface Release {
  tag: string;
  notes: string | null;
  runId: number;
  frozenAt: string;
}

export const getReleases = () => api.get<{ releases: Release[] }>('/releases');
export const releasesQueryOptions = () => queryOptions({ queryKey: ['releases'], queryFn: getReleases });
export const useReleases = () => useQuery(releasesQueryOptions());

import { queryOptions, useQuery } from '@tanstack/react-query';
import { api, ApiError } from '../apiClient';
import type { Me } from '../roles';

/** The signed-in person, or null when nobody is signed in (401). */
export async function getMe(): Promise<Me | null> {
  try {
    return await api.get<Me>('/me');
  } catch (e) {
    if (e instanceof ApiError && e.status === 401) return null;
    throw e;
  }
}

export const meQueryOptions = () => queryOptions({ queryKey: ['me'], queryFn: getMe, staleTime: 60_000 });
export const useMe = () => useQuery(meQueryOptions());

import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';

/** A personal API token as listed (the secret itself is never listed). */
export interface ApiToken {
  id: number;
  name: string;
  createdAt: string;
  lastUsedAt: string | null;
  revokedAt: string | null;
}

export const getTokens = () => api.get<{ tokens: ApiToken[] }>('/tokens');
export const tokensQueryOptions = () => queryOptions({ queryKey: ['tokens'], queryFn: getTokens });
export const useTokens = () => useQuery(tokensQueryOptions());

import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { TokenList } from '../../../lib/api/types';

/** A personal API token as listed (the secret itself is never listed). */
export type { ApiToken } from '../../../lib/api/types';

export const getTokens = () => api.get<TokenList>('/tokens');
export const tokensQueryOptions = () => queryOptions({ queryKey: ['tokens'], queryFn: getTokens });
export const useTokens = () => useQuery(tokensQueryOptions());

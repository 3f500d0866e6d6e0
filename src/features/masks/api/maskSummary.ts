import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { MaskSummary } from '../../../lib/api/types';

export type { MaskCell, MaskSummary } from '../../../lib/api/types';



/** `query` is the criteria part of the query string (without format). */
export const getMaskSummary = (query: string) => api.get<MaskSummary>(`/masks?${query ? `${query}&` : ''}format=json`);
export const maskSummaryQueryOptions = (query: string) => queryOptions({ queryKey: ['masks', 'summary', query], queryFn: () => getMaskSummary(query) });
export const useMaskSummary = (query: string) => useQuery({ ...maskSummaryQueryOptions(query), placeholderData: keepPreviousData, retry: false });

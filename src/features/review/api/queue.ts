import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { QueueSort, QueueState, SortOrder } from '../types';
import type { ReviewQueue } from '../../../lib/api/types';

export interface QueueParams {
  state: QueueState;
  sort: QueueSort;
  order: SortOrder;
}

export const getReviewQueue = (p: QueueParams) => api.get<ReviewQueue>(`/review/queue?${new URLSearchParams({ state: p.state, sort: p.sort, order: p.order })}`);

export const reviewQueueQueryOptions = (p: QueueParams) =>
  queryOptions({ queryKey: ['review', 'queue', p], queryFn: () => getReviewQueue(p), placeholderData: keepPreviousData });

export const useReviewQueue = (p: QueueParams) => useQuery(reviewQueueQueryOptions(p));

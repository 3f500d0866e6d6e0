import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { OutboxMessage, OutboxPage } from '../../../lib/api/types';

export type OutboxStatus = OutboxMessage['status'];

export type { OutboxMessage } from '../../../lib/api/types';

export interface OutboxPageParams {
  limit: number;
  offset: number;
}

/** Every e-mail Starveil composed, newest first (admin only). */
export const getOutbox = (p: OutboxPageParams) =>
  api.get<OutboxPage>(`/admin/outbox?${new URLSearchParams({ limit: String(p.limit), offset: String(p.offset) })}`);

export const outboxQueryOptions = (p: OutboxPageParams) =>
  queryOptions({
    queryKey: ['admin', 'outbox', p],
    queryFn: () => getOutbox(p),
    placeholderData: keepPreviousData,
    // new messages appear while the page is open (a reset link someone just asked for)
    refetchInterval: 5000,
  });

export const useOutbox = (p: OutboxPageParams) => useQuery(outboxQueryOptions(p));

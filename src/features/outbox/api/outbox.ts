import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';

export type OutboxStatus = 'stored' | 'sending' | 'sent' | 'failed';

export interface OutboxMessage {
  id: number;
  to: string;
  from: string;
  subject: string;
  text: string;
  createdAt: string;
  transport: 'outbox' | 'smtp';
  status: OutboxStatus;
  error: string | null;
}

export interface OutboxPageParams {
  limit: number;
  offset: number;
}

/** Every e-mail Starveil composed, newest first (admin only). */
export const getOutbox = (p: OutboxPageParams) =>
  api.get<{ messages: OutboxMessage[]; total: number }>(`/admin/outbox?${new URLSearchParams({ limit: String(p.limit), offset: String(p.offset) })}`);

export const outboxQueryOptions = (p: OutboxPageParams) =>
  queryOptions({
    queryKey: ['admin', 'outbox', p],
    queryFn: () => getOutbox(p),
    placeholderData: keepPreviousData,
    // new messages appear while the page is open (a reset link someone just asked for)
    refetchInterval: 5000,
  });

export const useOutbox = (p: OutboxPageParams) => useQuery(outboxQueryOptions(p));

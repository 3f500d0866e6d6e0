import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { AccountList } from '../../../lib/api/types';

export type { Account } from '../../../lib/api/types';

export const getUsers = () => api.get<AccountList>('/admin/users');
export const usersQueryOptions = () => queryOptions({ queryKey: ['admin', 'users'], queryFn: getUsers });
export const useUsers = () => useQuery(usersQueryOptions());

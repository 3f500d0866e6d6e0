import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { Account } from '../../../lib/api/types';

export type { Account } from '../../../lib/api/types';

export const getUsers = () => api.get<{ users: Account[] }>('/admin/users');
export const usersQueryOptions = () => queryOptions({ queryKey: ['admin', 'users'], queryFn: getUsers });
export const useUsers = () => useQuery(usersQueryOptions());

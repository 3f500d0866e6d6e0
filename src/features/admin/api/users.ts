import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { Role } from '../../../lib/roles';

export interface Account {
  id: number;
  email: string;
  name: string;
  role: Role;
  disabled: boolean;
  createdAt: string;
  lastSignInAt: string | null;
}

export const getUsers = () => api.get<{ users: Account[] }>('/admin/users');
export const usersQueryOptions = () => queryOptions({ queryKey: ['admin', 'users'], queryFn: getUsers });
export const useUsers = () => useQuery(usersQueryOptions());

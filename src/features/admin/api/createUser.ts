import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { Role } from '../../../lib/roles';
import type { Account } from './users';

export const createUser = (input: { email: string; name: string; role: Role; password: string }) => api.post<Account>('/admin/users', input);

export function useCreateUser() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: createUser, onSuccess: () => qc.invalidateQueries({ queryKey: ['admin', 'users'] }) });
}

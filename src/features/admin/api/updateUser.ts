import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { Role } from '../../../lib/roles';
import type { Account } from './users';

export const updateUser = ({ id, ...changes }: { id: number; name?: string; role?: Role; disabled?: boolean }) => api.patch<Account>(`/admin/users/${id}`, changes);

export function useUpdateUser() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: updateUser, onSettled: () => qc.invalidateQueries({ queryKey: ['admin', 'users'] }) });
}

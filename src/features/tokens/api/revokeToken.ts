import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';

export const revokeToken = (id: number) => api.delete<void>(`/tokens/${id}`);

export function useRevokeToken() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: revokeToken, onSettled: () => qc.invalidateQueries({ queryKey: ['tokens'] }) });
}

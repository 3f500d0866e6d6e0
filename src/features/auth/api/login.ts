import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { OperationAnswer } from '../../../lib/api/types';

export const login = (input: { email: string; password: string }) => api.post<OperationAnswer<'/auth/login', 'post'>>('/auth/login', input);

export function useLogin() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: login,
    onSuccess: (data) => {
      qc.clear();
      qc.setQueryData(['me'], data.user);
    },
  });
}

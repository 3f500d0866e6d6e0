import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';

export const confirmPasswordReset = (input: { token: string; newPassword: string }) => api.post<void>('/auth/password-reset/confirm', input);

/** Every session of the account ends on success, so whoever was signed in here is asked again. */
export function useConfirmPasswordReset() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: confirmPasswordReset,
    onSuccess: () => qc.invalidateQueries({ queryKey: ['me'] }),
  });
}

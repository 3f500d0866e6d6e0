import { useMutation } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';

/** Always answers the same, whether or not the address has an account. */
export const requestPasswordReset = (input: { email: string }) => api.post<{ message: string }>('/auth/password-reset/request', input);
export const useRequestPasswordReset = () => useMutation({ mutationFn: requestPasswordReset });

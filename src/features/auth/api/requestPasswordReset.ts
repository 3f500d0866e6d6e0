import { useMutation } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { OperationAnswer } from '../../../lib/api/types';

/** Always answers the same, whether or not the address has an account. */
export const requestPasswordReset = (input: { email: string }) => api.post<OperationAnswer<'/auth/password-reset/request', 'post'>>('/auth/password-reset/request', input);
export const useRequestPasswordReset = () => useMutation({ mutationFn: requestPasswordReset });

import { useMutation } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';

export const changePassword = (input: { currentPassword: string; newPassword: string }) => api.post<void>('/me/password', input);
export const useChangePassword = () => useMutation({ mutationFn: changePassword });

import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { CreatedToken } from '../../../lib/api/types';

/** The answer to a creation: the only time the secret is shown. */
export type { CreatedToken } from '../../../lib/api/types';

export const createToken = (input: { name: string }) => api.post<CreatedToken>('/tokens', input);

export function useCreateToken() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: createToken, onSuccess: () => qc.invalidateQueries({ queryKey: ['tokens'] }) });
}

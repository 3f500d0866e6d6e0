import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { InstrumentBand, InstrumentCreate, InstrumentList, InstrumentUpdate } from '../../../lib/api/types';

export const BANDS = ['U', 'B', 'V', 'R', 'I'] as const;
export type Band = InstrumentBand;

/** An instrument as GET /instruments lists it. */
export type RegisteredInstrument = InstrumentList['instruments'][number];

export type InstrumentInput = InstrumentCreate;

// same query key as the upload form's instrument list, so both refresh together
export const useRegisteredInstruments = () => useQuery({ queryKey: ['instruments'], queryFn: () => api.get<InstrumentList>('/instruments') });

export function useCreateInstrument() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: (input: InstrumentInput) => api.post<RegisteredInstrument>('/instruments', input), onSuccess: () => qc.invalidateQueries({ queryKey: ['instruments'] }) });
}

export function useUpdateInstrument() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ code, ...changes }: { code: string } & InstrumentUpdate) => api.patch<RegisteredInstrument>(`/instruments/${encodeURIComponent(code)}`, changes),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['instruments'] }),
  });
}

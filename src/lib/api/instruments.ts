import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../apiClient';
import type { InstrumentList } from './types';

export const getInstruments = () => api.get<InstrumentList>('/instruments');
export const instrumentsQueryOptions = () => queryOptions({ queryKey: ['instruments'], queryFn: getInstruments, staleTime: 10 * 60_000 });
export const useInstruments = () => useQuery(instrumentsQueryOptions());

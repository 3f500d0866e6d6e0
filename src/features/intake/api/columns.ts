import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { IntakeColumnsResponse } from '../types';

export const getIntakeColumns = () => api.get<IntakeColumnsResponse>('/intake/columns');
export const intakeColumnsQueryOptions = () => queryOptions({ queryKey: ['intake', 'columns'], queryFn: getIntakeColumns, staleTime: 10 * 60_000 });
export const useIntakeColumns = () => useQuery(intakeColumnsQueryOptions());

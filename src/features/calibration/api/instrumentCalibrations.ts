import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { InstrumentCalibration } from '../types';

export const getInstrumentCalibrations = (code: string) => api.get<{ instrument: string; calibrations: InstrumentCalibration[] }>(`/instruments/${encodeURIComponent(code)}/calibrations`);
export const instrumentCalibrationsQueryOptions = (code: string) => queryOptions({ queryKey: ['calibration', 'instrument', code], queryFn: () => getInstrumentCalibrations(code) });
export const useInstrumentCalibrations = (code: string) => useQuery(instrumentCalibrationsQueryOptions(code));

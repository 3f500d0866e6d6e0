import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { InstrumentCalibrationHistory } from '../../../lib/api/types';

export const getInstrumentCalibrations = (code: string) => api.get<InstrumentCalibrationHistory>(`/instruments/${encodeURIComponent(code)}/calibrations`);
export const instrumentCalibrationsQueryOptions = (code: string) => queryOptions({ queryKey: ['calibration', 'instrument', code], queryFn: () => getInstrumentCalibrations(code) });
export const useInstrumentCalibrations = (code: string) => useQuery(instrumentCalibrationsQueryOptions(code));

import { queryOptions, useQuery } from '@tanstack/react-query';
import { MEASUREMENT_STATES, type MeasurementState } from '../types';
import { batchMeasurementsKey, getBatchMeasurements } from './measurements';

/** How many of a batch's measurements are in each state (one row asked for per state; only the totals are read). */
export async function getStateTotals(batchId: number): Promise<Record<MeasurementState, number>> {
  const totals = await Promise.all(MEASUREMENT_STATES.map((state) => getBatchMeasurements(batchId, { state, sort: 'line', order: 'asc', offset: 0, limit: 1 }).then((p) => p.total)));
  return Object.fromEntries(MEASUREMENT_STATES.map((s, i) => [s, totals[i]])) as Record<MeasurementState, number>;
}

export const stateTotalsQueryOptions = (batchId: number) =>
  queryOptions({ queryKey: [...batchMeasurementsKey(batchId), 'totals'], queryFn: () => getStateTotals(batchId) });

export const useStateTotals = (batchId: number) => useQuery(stateTotalsQueryOptions(batchId));

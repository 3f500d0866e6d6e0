import { infiniteQueryOptions, useInfiniteQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { MeasurementListParams, MeasurementPage } from '../types';

/** Rows asked for at a time as the table scrolls (the server allows up to 5000). */
export const MEASUREMENTS_PAGE = 1000;

export function getBatchMeasurements(batchId: number, p: MeasurementListParams & { offset: number; limit: number }) {
  const qs = new URLSearchParams({ offset: String(p.offset), limit: String(p.limit), sort: p.sort, order: p.order });
  for (const k of ['state', 'band', 'instrument', 'distance_method', 'flag'] as const) if (p[k]) qs.set(`filter.${k}`, p[k]!);
  if (p.search?.trim()) qs.set('search', p.search.trim());
  return api.get<MeasurementPage>(`/batches/${batchId}/measurements?${qs}`);
}

/** Every cached listing of one batch's measurements starts with this key (edits update them all). */
export const batchMeasurementsKey = (batchId: number) => ['review', 'measurements', batchId] as const;

export const batchMeasurementsQueryOptions = (batchId: number, p: MeasurementListParams) =>
  infiniteQueryOptions({
    queryKey: [...batchMeasurementsKey(batchId), 'list', p],
    queryFn: ({ pageParam }) => getBatchMeasurements(batchId, { ...p, offset: pageParam, limit: MEASUREMENTS_PAGE }),
    initialPageParam: 0,
    // a page is only ever appended or patched row by row: comparing 100,000 rows deeply on each page is wasted work
    structuralSharing: false,
    getNextPageParam: (last, pages) => {
      const loaded = pages.reduce((n, pg) => n + pg.rows.length, 0);
      return loaded < last.total && last.rows.length > 0 ? loaded : undefined;
    },
  });

export const useBatchMeasurements = (batchId: number, p: MeasurementListParams) => useInfiniteQuery(batchMeasurementsQueryOptions(batchId, p));

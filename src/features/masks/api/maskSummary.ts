import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';

export interface MaskCell {
  ipix: number;
  lonDeg: number;
  latDeg: number;
  raDeg: number;
  decDeg: number;
  nStars: number;
  nLayers: number;
  maxJumpDeg: number | null;
  maxJumpSignificance: number | null;
  nearestLayerPc: number | null;
  farthestLayerPc: number | null;
  flagged: boolean;
}

/** GET /masks?format=json: the flag and values of every cell of the run, counts and the MOC's size. */
export interface MaskSummary {
  run: { id: number; params: { nside: number; coordsys: 'G' | 'C'; band: string }; fingerprint: string | null; finishedAt: string | null };
  release: string | null;
  convention: 'iau' | 'cosmo';
  criteria: Record<string, number | null>;
  nside: number;
  frame: 'G' | 'C';
  counts: { cells: number; flagged: number };
  moc: { order: number; frame: 'ICRS'; cells: number; skyFraction: number };
  cells: MaskCell[];
}

/** `query` is the criteria part of the query string (without format). */
export const getMaskSummary = (query: string) => api.get<MaskSummary>(`/masks?${query ? `${query}&` : ''}format=json`);
export const maskSummaryQueryOptions = (query: string) => queryOptions({ queryKey: ['masks', 'summary', query], queryFn: () => getMaskSummary(query) });
export const useMaskSummary = (query: string) => useQuery({ ...maskSummaryQueryOptions(query), placeholderData: keepPreviousData, retry: false });

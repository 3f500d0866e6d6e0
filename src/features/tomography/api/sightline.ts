import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { SightlineAnswer } from '../types';

export interface SightlineParams {
  nside: number;
  /** nested pixel number in the run's frame */
  ipix: number;
  /** absent: the latest finished run */
  run?: number;
}

/** One cell's layers, jumps and segments, with its stars in distance order; angles and u in the IAU convention (the pages say so). */
export function getSightline(p: SightlineParams) {
  const qs = new URLSearchParams({ nside: String(p.nside), ipix: String(p.ipix), include: 'stars', convention: 'iau' });
  if (p.run) qs.set('run', String(p.run));
  return api.get<SightlineAnswer>(`/sightlines?${qs}`);
}

export const sightlineQueryOptions = (p: SightlineParams) =>
  queryOptions({ queryKey: ['tomography', 'sightline', p], queryFn: () => getSightline(p), staleTime: Infinity });

export const useSightline = (p: SightlineParams, enabled = true) => useQuery({ ...sightlineQueryOptions(p), enabled });

import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { StarListParams } from '../types';
import type { StarList } from '../../../lib/api/types';

export function getStars(p: StarListParams) {
  const qs = new URLSearchParams({ sort: p.sort, order: p.order, limit: String(p.limit), offset: String(p.offset) });
  if (p.q) qs.set('q', p.q);
  if (p.cone) {
    const gal = p.cone.frame === 'galactic';
    qs.set(gal ? 'l' : 'ra', p.cone.ra);
    qs.set(gal ? 'b' : 'dec', p.cone.dec);
    qs.set('radius', p.cone.radius);
  }
  if (p.flag) qs.set('flag', p.flag);
  return api.get<StarList>(`/stars?${qs}`);
}

export const starsQueryOptions = (p: StarListParams) => queryOptions({ queryKey: ['catalog', 'stars', p], queryFn: () => getStars(p), placeholderData: keepPreviousData });

export const useStars = (p: StarListParams) => useQuery(starsQueryOptions(p));

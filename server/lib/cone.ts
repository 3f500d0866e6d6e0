/** Cone searches over rows that carry `hpx15`, the nested HEALPix index at order 15 (ICRS). */
import type { Knex } from 'knex';
import { discRangesNest } from '../science/discRanges.js';
import { angularSeparationDeg } from '../science/separation.js';

const INDEX_ORDER = 15;

/** Add a cone condition on `column` (order-15 index) to a query; rows still need withinCone. */
export function whereInCone(q: Knex.QueryBuilder, column: string, raDeg: number, decDeg: number, radiusDeg: number): Knex.QueryBuilder {
  const ranges = discRangesNest(INDEX_ORDER, raDeg, decDeg, radiusDeg);
  return q.where((w) => {
    for (const [lo, hi] of ranges) w.orWhereBetween(column, [lo, hi]);
  });
}

/** The rows inside the cone (exact Vincenty separation), each with separation_deg, nearest first. */
export function withinCone<T extends { ra_deg: number; dec_deg: number }>(rows: T[], raDeg: number, decDeg: number, radiusDeg: number): (T & { separation_deg: number })[] {
  return rows
    .map((r) => ({ ...r, separation_deg: angularSeparationDeg(raDeg, decDeg, r.ra_deg, r.dec_deg) }))
    .filter((r) => r.separation_deg <= radiusDeg)
    .sort((a, b) => a.separation_deg - b.separation_deg);
}

import type { Knex } from 'knex';
import { queryDiscNest } from '../science/healpix.js';
import { angularSeparationDeg } from '../science/separation.js';

const INDEX_ORDER = 15;

/** Order whose pixels are about a quarter of the radius across (bounded 2…15). */
export function coverOrder(radiusDeg: number): number {
  // pixel size ≈ 58.6° / 2^order (sqrt of 4π/12 sr)
  const order = Math.floor(Math.log2(58.6 / Math.max(radiusDeg / 2, 1e-6)));
  return Math.max(2, Math.min(INDEX_ORDER, order));
}

/**
 * Ranges of order-15 nested indices that cover a disc: the disc's inclusive pixels at a coarser
 * order, each a contiguous block of 4^(15−order) fine indices (nested ordering), merged.
 */
export function coverRanges(raDeg: number, decDeg: number, radiusDeg: number): [number, number][] {
  const order = coverOrder(radiusDeg);
  const nside = 2 ** order;
  const shift = 4 ** (INDEX_ORDER - order);
  const pix = queryDiscNest(nside, raDeg, decDeg, radiusDeg, true);
  const out: [number, number][] = [];
  for (const p of pix) {
    const lo = p * shift;
    const hi = (p + 1) * shift - 1;
    const last = out[out.length - 1];
    if (last && lo <= last[1] + 1) last[1] = Math.max(last[1], hi);
    else out.push([lo, hi]);
  }
  return out;
}

/** Add a cone condition on `column` (order-15 index) to a query; rows still need the exact check. */
export function whereInCone(q: Knex.QueryBuilder, column: string, raDeg: number, decDeg: number, radiusDeg: number): Knex.QueryBuilder {
  const ranges = coverRanges(raDeg, decDeg, radiusDeg);
  return q.where((w) => {
    for (const [lo, hi] of ranges) w.orWhereBetween(column, [lo, hi]);
  });
}

export function withinCone<T extends { ra_deg: number; dec_deg: number }>(rows: T[], raDeg: number, decDeg: number, radiusDeg: number): (T & { separation_deg: number })[] {
  return rows
    .map((r) => ({ ...r, separation_deg: angularSeparationDeg(raDeg, decDeg, r.ra_deg, r.dec_deg) }))
    .filter((r) => r.separation_deg <= radiusDeg)
    .sort((a, b) => a.separation_deg - b.separation_deg);
}

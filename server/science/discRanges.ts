/**
 * A disc as ranges of NESTED pixel numbers at a fine order, for index range scans: the disc's
 * inclusive pixels at a coarser order, each a contiguous block of 4^(fine − coarse) fine numbers
 * (nested ordering: the children of p at the next order are 4p … 4p+3), merged where adjacent.
 * Every fine pixel that overlaps the disc lies inside one of the blocks; rows still need an
 * exact separation test.
 */
import { queryDiscNest } from './healpix.js';

/**
 * Order whose pixels are about a quarter of the radius across (bounded 2…maxOrder): coarse enough
 * to keep the disc query small, fine enough that the blocks hug the disc.
 * Pixel size ≈ 58.6° / 2^order (√(4π/12) sr in degrees).
 */
export function coverOrder(radiusDeg: number, maxOrder = 15): number {
  const order = Math.floor(Math.log2(58.6 / Math.max(radiusDeg / 2, 1e-6)));
  return Math.max(2, Math.min(maxOrder, order));
}

/** Inclusive ranges [lo, hi] of NESTED pixel numbers at `fineOrder` whose blocks cover the disc. */
export function discRangesNest(fineOrder: number, lonDeg: number, latDeg: number, radiusDeg: number): [number, number][] {
  const order = Math.min(fineOrder, coverOrder(radiusDeg));
  const shift = 4 ** (fineOrder - order);
  const out: [number, number][] = [];
  for (const p of queryDiscNest(2 ** order, lonDeg, latDeg, radiusDeg, true)) {
    const lo = p * shift;
    const hi = (p + 1) * shift - 1;
    const last = out[out.length - 1];
    if (last && lo <= last[1] + 1) last[1] = Math.max(last[1], hi);
    else out.push([lo, hi]);
  }
  return out;
}

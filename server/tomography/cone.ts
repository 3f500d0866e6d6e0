/**
 * Which cells of a run a cone touches, through the HEALPix index (never a scan of the run).
 *
 * 1. Candidates: the inclusive disc query (server/science/discRanges.ts, on queryDiscNest) at a coarse
 *    order, each coarse pixel being a contiguous block of run-cell numbers in the NESTED scheme.
 *    Every run cell that overlaps the disc lies inside a coarse pixel that overlaps it, so the
 *    blocks hold them all; the database reads only those blocks (index on run_id, ipix).
 * 2. Exact test per candidate cell (pixelOverlapsDisc): centre inside the cone → overlaps; centre
 *    farther than radius + the largest centre-to-corner distance → does not; the cell holding the
 *    cone centre → overlaps; otherwise the cell is split into its four NESTED children, down to
 *    REFINE_ORDERS orders finer (then a child within its own corner distance of the edge counts).
 */
import { discRangesNest } from '../science/discRanges.js';
import { ang2pixNest, maxPixelRadiusDeg, orderForNside, pix2angNest } from '../science/healpix.js';
import { angularSeparationDeg } from '../science/separation.js';

/** Orders finer than the cell the edge test descends to (1/64 of a cell across). */
export const REFINE_ORDERS = 6;

/** Ranges [lo, hi] of run-cell numbers (NESTED, run NSIDE) whose blocks cover the disc. */
export function candidateCellRanges(runNside: number, lonDeg: number, latDeg: number, radiusDeg: number): [number, number][] {
  return discRangesNest(orderForNside(runNside), lonDeg, latDeg, radiusDeg);
}

/** True when the NESTED pixel (order, ipix) has a point within radiusDeg of (lon, lat); see the file header. */
export function pixelOverlapsDisc(order: number, ipix: number, lonDeg: number, latDeg: number, radiusDeg: number, finestOrder = Math.min(15, order + REFINE_ORDERS)): boolean {
  const nside = 2 ** order;
  const c = pix2angNest(nside, ipix);
  const sep = angularSeparationDeg(lonDeg, latDeg, c.lonDeg, c.latDeg);
  if (sep <= radiusDeg) return true;
  if (sep > radiusDeg + maxPixelRadiusDeg(nside)) return false;
  if (ang2pixNest(nside, lonDeg, latDeg) === ipix) return true;
  if (order >= finestOrder) return true;
  for (let k = 0; k < 4; k++) if (pixelOverlapsDisc(order + 1, ipix * 4 + k, lonDeg, latDeg, radiusDeg, finestOrder)) return true;
  return false;
}

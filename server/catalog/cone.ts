import type { Knex } from 'knex';
import { queryDiscNest } from '../science/healpix.js';
import { angularSeparationDeg } from '../science/separation.js';
import { galacticToIcrs } from '../science/frames.js';
import { parseDecDeg, parseRaDeg } from '../science/sexagesimal.js';
import { badRequest } from '../errors.js';

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

/**
 * The centre of a cone search from query text: `ra`/`dec` in decimal degrees or sexagesimal
 * (RA in hours, e.g. 14:29:42.6 or 14h29m42.6s; Dec e.g. -18:18:24), the same forms an upload
 * accepts; or Galactic `l`/`b` in degrees, turned into ICRS. Nothing given → undefined.
 */
export function coneCentre(q: Record<string, unknown>): { ra?: number; dec?: number } {
  const text = (v: unknown) => (v === undefined || v === null || String(v).trim() === '' ? undefined : String(v));
  const ra = text(q.ra), dec = text(q.dec), l = text(q.l), b = text(q.b);
  const bad = (field: string, message: string) => badRequest(`${field}: ${message}`, { fields: [{ field, message }] });
  if ((l !== undefined || b !== undefined) && (ra !== undefined || dec !== undefined)) throw bad(l !== undefined ? 'l' : 'b', 'give either ra and dec, or l and b, not both');
  if (l !== undefined || b !== undefined) {
    if (l === undefined || b === undefined) throw bad(l === undefined ? 'l' : 'b', 'a Galactic cone needs l and b (degrees)');
    const lv = Number(l), bv = Number(b);
    if (!Number.isFinite(lv) || lv < 0 || lv >= 360) throw bad('l', `"${l}" is not a Galactic longitude; expected degrees, 0 ≤ l < 360`);
    if (!Number.isFinite(bv) || bv < -90 || bv > 90) throw bad('b', `"${b}" is not a Galactic latitude; expected degrees, −90 ≤ b ≤ 90`);
    const c = galacticToIcrs(lv, bv);
    return { ra: ((c.raDeg % 360) + 360) % 360, dec: c.decDeg };
  }
  const out: { ra?: number; dec?: number } = {};
  if (ra !== undefined) {
    const r = parseRaDeg(ra);
    if (!r.ok) throw bad('ra', r.message);
    out.ra = r.value;
  }
  if (dec !== undefined) {
    const d = parseDecDeg(dec);
    if (!d.ok) throw bad('dec', d.message);
    out.dec = d.value;
  }
  return out;
}

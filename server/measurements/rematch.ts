import type { Knex } from 'knex';
import { queryDiscNest } from '../science/healpix.js';
import { angularSeparationDeg } from '../science/separation.js';
import { INDEX_NSIDE } from './derive.js';

export interface Rematch {
  /** the star the row stays tied to, or null when it left the match radius and is held */
  starId: number | null;
  /** separation of the new position from the star it was tied to, arcsec */
  separationArcsec: number | null;
  /** held for a curator: the new position is beyond the radius from its star */
  held: boolean;
  /** stars within the radius of the new position (for the curator to attach), nearest first */
  candidates: { id: number; name: string; sourceId: string | null; separationArcsec: number }[];
  warning: { field: string; message: string } | null;
}

/**
 * After a position edit: the separation to the tied star and, when it exceeds the match radius,
 * the stars near the new position. A row that moved away from its star is held (ambiguous, untied)
 * rather than silently staying tied to a star that is no longer there.
 */
export async function rematchPosition(trx: Knex | Knex.Transaction, m: { star_id: number | null }, raDeg: number, decDeg: number, radiusArcsec: number): Promise<Rematch> {
  const star = m.star_id ? await trx('stars').where({ id: m.star_id }).first('id', 'name', 'ra_deg', 'dec_deg') : null;
  const sep = star ? angularSeparationDeg(raDeg, decDeg, star.ra_deg, star.dec_deg) * 3600 : null;
  if (star && sep! <= radiusArcsec) return { starId: star.id, separationArcsec: sep, held: false, candidates: [], warning: null };
  // the stars within the radius of the new position (HEALPix order-15 cells, then the exact separation)
  const ranges = queryDiscNest(INDEX_NSIDE, raDeg, decDeg, Math.max(radiusArcsec, 1) / 3600, true);
  const near: Rematch['candidates'] = [];
  for (let i = 0; i < ranges.length; i += 400) {
    const rows = await trx('stars').whereIn('hpx15', ranges.slice(i, i + 400)).select('id', 'name', 'source_id', 'ra_deg', 'dec_deg');
    for (const s of rows) {
      const d = angularSeparationDeg(raDeg, decDeg, s.ra_deg, s.dec_deg) * 3600;
      if (d <= radiusArcsec) near.push({ id: s.id, name: s.name, sourceId: s.source_id, separationArcsec: d });
    }
  }
  near.sort((a, b) => a.separationArcsec - b.separationArcsec);
  const far = sep === null ? '' : sep >= 3600 ? `${(sep / 3600).toFixed(2)}°` : `${sep.toFixed(2)}″`;
  const message = star
    ? `the new position is ${far} from ${star.name ?? `star ${star.id}`} (match radius ${radiusArcsec}″): held for a curator to attach it to ${near.length ? 'a star nearby' : 'a star'} or make a new one`
    : `no star is tied to this row; ${near.length} star(s) within ${radiusArcsec}″ of the new position`;
  return { starId: null, separationArcsec: sep, held: true, candidates: near, warning: { field: 'ra_deg', message } };
}

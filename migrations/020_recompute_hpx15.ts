import type { Knex } from 'knex';
import { ang2pixNest } from '../server/science/healpix.js';

// The order-15 spatial index (hpx15, NESTED, ICRS) was computed through @hscmap/healpix 1.4.12,
// which put points of the polar caps at RA exactly 0°, 90°, 180° or 270° (e.g. 12:00:00 +60:00:00)
// into pixel NSIDE²−1, far from the star, so cone search and cross-matching missed them.
// server/science/healpix.ts now has its own ang2pix (Górski et al. 2005, as in HEALPix C++); this
// recomputes every stored index from the stored position and rewrites the ones that differ.
// release_stars.hpx15 is an index over a frozen copy, not released data: it is corrected too.
const TABLES = ['stars', 'measurements', 'release_stars'] as const;
const INDEX_NSIDE = 32768;
const CHUNK = 5000;

async function recompute(knex: Knex, table: string): Promise<void> {
  if (!(await knex.schema.hasTable(table))) return;
  const key = table === 'release_stars' ? ['release_id', 'star_id'] : ['id'];
  let offset = 0;
  for (;;) {
    const rows: Record<string, number>[] = await knex(table)
      .select([...key, 'ra_deg', 'dec_deg', 'hpx15'])
      .orderBy(key)
      .limit(CHUNK)
      .offset(offset);
    if (rows.length === 0) break;
    offset += rows.length;
    for (const r of rows) {
      const right = ang2pixNest(INDEX_NSIDE, r.ra_deg, r.dec_deg);
      if (Number(r.hpx15) === right) continue;
      const where: Record<string, number> = {};
      for (const k of key) where[k] = r[k];
      await knex(table).where(where).update({ hpx15: right });
    }
  }
}

export async function up(knex: Knex): Promise<void> {
  for (const t of TABLES) await recompute(knex, t);
}

// The old indices were wrong; going down leaves the corrected ones in place.
export async function down(): Promise<void> {}

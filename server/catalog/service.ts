import type { Knex } from 'knex';
import type { SessionUser } from '../auth/roles.js';
import { hasRole } from '../auth/roles.js';
import { badRequest, notFound } from '../errors.js';
import { combineMeasurements } from '../science/combine.js';
import { whereInCone, withinCone } from '../lib/cone.js';
import { FLAG_NAMES, plausibilityService } from '../calibration/service.js';

/** Flags a catalog search can ask for (plausibility flags and the stored quality flags). */
export const STAR_FLAGS = [...FLAG_NAMES, 'low_parallax_snr', 'no_distance'];
import { settlingBatchIds, whereApprovedSettled, whereMeasurementVisible as whereMeasurementNotHidden, whereStarVisible as whereStarNotHidden } from '../lib/visibility.js';

const STAR_SORTS = ['id', 'name', 'source_id', 'ra_deg', 'dec_deg', 'glon_deg', 'glat_deg', 'parallax_mas', 'n_measurements'] as const;

export interface StarQuery {
  q?: string;
  ra?: number;
  dec?: number;
  radius?: number;
  sort: string;
  order: 'asc' | 'desc';
  limit: number;
  offset: number;
  /** only stars with a visible measurement carrying this flag */
  flag?: string;
}

/** Which measurements a person may read: modelers approved only; observers approved + their own batches'. */
export function visibleMeasurements(db: Knex, user: SessionUser) {
  // rows of a batch still being checked (or failed) are invisible to everyone (server/lib/visibility.ts)
  const q = whereMeasurementNotHidden(db('measurements'), db);
  if (hasRole(user, ['curator'])) return q;
  // approved rows of a batch being approved or returned right now wait for its flip (whereApprovedSettled)
  if (user.role === 'observer') return q.where((w) => w.where((a) => whereApprovedSettled(a, db)).orWhereIn('measurements.batch_id', db('batches').where('uploaded_by', user.id).select('id')));
  return whereApprovedSettled(q, db);
}

/**
 * Restrict a query over `stars` (or the alias `table`) to the stars a person may know exist.
 * Curators (and admins) see every star. Anyone else sees a star with an approved measurement.
 * An observer also sees the stars they created and the stars their own measurements are tied to,
 * except a star another observer's batch created that has no approved measurement yet: its
 * name, source_id and very existence stay with that observer and the curators until approval.
 */
export function whereStarVisible<T extends Knex.QueryBuilder>(q: T, db: Knex, user: SessionUser, table = 'stars'): T {
  q = whereStarNotHidden(q, db, table);
  if (hasRole(user, ['curator'])) return q;
  const approved = () => whereApprovedSettled(db('measurements').select(db.raw('1')).whereRaw('measurements.star_id = ??.id', [table]), db);
  if (user.role !== 'observer') return q.whereExists(approved()) as T;
  const own = db('measurements').select(db.raw('1')).whereRaw('measurements.star_id = ??.id', [table]).whereIn('measurements.batch_id', db('batches').where('uploaded_by', user.id).select('id'));
  const otherObservers = db('users').where('role', 'observer').whereNot('id', user.id).select('id');
  return q.where((w) =>
    w.whereExists(approved())
      .orWhere(`${table}.created_by`, user.id)
      .orWhere((o) => o.whereExists(own).where((c) => c.whereNull(`${table}.created_by`).orWhereNotIn(`${table}.created_by`, otherObservers))),
  ) as T;
}

/** Count of the stars a person may know exist (the overview). */
export async function visibleStarCount(db: Knex, user: SessionUser): Promise<number> {
  const [{ n }] = await whereStarVisible(db('stars'), db, user).count({ n: '*' });
  return Number(n);
}

export function catalogService(db: Knex) {
  const plausibility = plausibilityService(db);
  return {
    async stars(user: SessionUser, query: StarQuery) {
      if (!(STAR_SORTS as readonly string[]).includes(query.sort)) throw badRequest(`sort must be one of ${STAR_SORTS.join(', ')}`, { fields: [{ field: 'sort', message: 'unknown column' }] });
      let base = db('stars');
      // stars known only from batches a person may not see stay hidden (an indexed EXISTS per star)
      base = whereStarVisible(base, db, user);
      if (query.q) {
        const like = `%${query.q.replace(/[%_]/g, (c) => `\\${c}`)}%`;
        base = base.where((w) => w.whereRaw("stars.name LIKE ? ESCAPE '\\'", [like]).orWhere('stars.source_id', query.q!));
      }
      if (query.flag) {
        if (!STAR_FLAGS.includes(query.flag)) throw badRequest(`flag must be one of ${STAR_FLAGS.join(', ')}`, { fields: [{ field: 'flag', message: 'unknown flag' }] });
        const filter = await plausibility.flagFilter(query.flag);
        base = base.whereExists(filter(visibleMeasurements(db, user).select(db.raw('1')).whereRaw('measurements.star_id = stars.id')));
      }
      const cone = query.ra !== undefined && query.dec !== undefined && query.radius !== undefined;
      if (cone) {
        if (!(query.radius! > 0 && query.radius! <= 30)) throw badRequest('radius must be in degrees, > 0 and ≤ 30', { fields: [{ field: 'radius', message: 'expected 0 < radius ≤ 30 (deg)' }] });
        if (!(query.ra! >= 0 && query.ra! < 360)) throw badRequest('ra must be in degrees, 0 ≤ ra < 360', { fields: [{ field: 'ra', message: 'expected 0 ≤ ra < 360 (deg)' }] });
        if (!(query.dec! >= -90 && query.dec! <= 90)) throw badRequest('dec must be in degrees, −90 ≤ dec ≤ 90', { fields: [{ field: 'dec', message: 'expected −90 ≤ dec ≤ 90 (deg)' }] });
        base = whereInCone(base, 'stars.hpx15', query.ra!, query.dec!, query.radius!);
      }
      const cols = ['stars.id', 'stars.name', 'stars.source_id', 'stars.ra_deg', 'stars.dec_deg', 'stars.glon_deg', 'stars.glat_deg', 'stars.parallax_mas', 'stars.parallax_err_mas'];
      const withCounts = async <T extends { id: number }>(rows: T[]) => {
        const counts = new Map<number, number>();
        for (const c of await visibleMeasurements(db, user).whereIn('measurements.star_id', rows.map((r) => r.id)).select('measurements.star_id').count({ n: '*' }).groupBy('measurements.star_id') as { star_id: number; n: number }[]) counts.set(Number(c.star_id), Number(c.n));
        return rows.map((r) => ({ ...r, n_measurements: counts.get(r.id) ?? 0 }));
      };
      if (cone) {
        // exact separations, nearest first unless another sort is asked for
        let all: Record<string, any>[] = withinCone(await base.clone().select(cols), query.ra!, query.dec!, query.radius!);
        if (query.sort === 'n_measurements') all = await withCounts(all as { id: number }[]);
        const key = query.sort;
        const sorted = key === 'id' ? all : [...all].sort((a, b) => (a[key] < b[key] ? -1 : a[key] > b[key] ? 1 : 0) * (query.order === 'desc' ? -1 : 1));
        const page = sorted.slice(query.offset, query.offset + query.limit) as { id: number }[];
        return { stars: (query.sort === 'n_measurements' ? page : await withCounts(page)).map(present), total: all.length };
      }
      const [{ n }] = await base.clone().count({ n: '*' });
      let rows;
      if (query.sort === 'n_measurements') {
        const counts = visibleMeasurements(db, user).select('star_id').count({ n: '*' }).groupBy('star_id').as('mc');
        rows = await base.clone().leftJoin(counts, 'mc.star_id', 'stars.id').select(cols).orderByRaw(`coalesce(mc.n, 0) ${query.order}`).orderBy('stars.id').limit(query.limit).offset(query.offset);
      } else rows = await base.clone().select(cols).orderBy(`stars.${query.sort}`, query.order).orderBy('stars.id').limit(query.limit).offset(query.offset);
      return { stars: (await withCounts(rows)).map(present), total: Number(n) };
    },

    async star(user: SessionUser, id: number) {
      // a star a person may not know of is "not found", exactly like a star that does not exist
      const star = await whereStarVisible(db('stars').where({ id }), db, user).first();
      if (!star) throw notFound(`Star ${id}`);
      const measurements = await visibleMeasurements(db, user).where('measurements.star_id', id).orderBy(['band', 'mjd', 'id']).select();
      // stored flags plus the read-time plausibility flags (p ceiling, χ²-inconsistent repeats)
      const flagged = await plausibility.annotate(measurements.map((m) => ({ p: m.p, star_id: m.star_id, flags: m.flags_json ? (JSON.parse(m.flags_json) as string[]) : [] })));
      // combined value per band and instrument from approved measurements (METHODS.md: inverse-variance weighted q, u)
      const settling = new Set((await settlingBatchIds(db)).map((b: { id: number }) => b.id));
      const groups = new Map<string, typeof measurements>();
      for (const m of measurements) {
        if (m.state !== 'approved' || settling.has(m.batch_id)) continue;
        const k = `${m.band}|${m.instrument}`;
        groups.set(k, [...(groups.get(k) ?? []), m]);
      }
      const combined = [...groups].map(([k, ms]) => {
        const [band, instrument] = k.split('|');
        const c = combineMeasurements(ms.map((m) => ({ q: m.q, u: m.u, qErr: m.q_err, uErr: m.u_err })));
        return { band, instrument, ...c };
      });
      return {
        star: present({ ...star, n_measurements: measurements.length }),
        measurements: measurements.map((m, i) => ({
          id: m.id, state: m.state, version: m.version, batchId: m.batch_id, band: m.band, instrument: m.instrument, mjd: m.mjd,
          q: m.q, u: m.u, q_err: m.q_err, u_err: m.u_err, p: m.p, p_err: m.p_err, p_debiased: m.p_debiased, theta_deg: m.theta_deg, theta_err_deg: m.theta_err_deg,
          q_gal: m.q_gal, u_gal: m.u_gal, theta_gal_deg: m.theta_gal_deg, distance_pc: m.distance_pc, distance_lo_pc: m.distance_lo_pc, distance_hi_pc: m.distance_hi_pc, distance_method: m.distance_method,
          flags: flagged[i].flags,
        })),
        combined,
        units: UNITS,
      };
    },
  };
}

export const UNITS = {
  q: 'fraction (Stokes Q/I), IAU convention, equatorial reference', u: 'fraction (Stokes U/I), IAU convention, equatorial reference', p: 'fraction', theta_deg: 'deg, east of north, [0, 180)',
  q_gal: 'fraction, Galactic reference', theta_gal_deg: 'deg from Galactic north through east', distance_pc: 'pc', ra_deg: 'deg ICRS', dec_deg: 'deg ICRS', parallax_mas: 'mas (as published; +0.017 mas zero point applied for distances)', mjd: 'd (MJD, UTC)',
};

function present(s: Record<string, any>) {
  return {
    id: s.id, name: s.name, sourceId: s.source_id, ra_deg: s.ra_deg, dec_deg: s.dec_deg, glon_deg: s.glon_deg, glat_deg: s.glat_deg,
    parallax_mas: s.parallax_mas, parallax_err_mas: s.parallax_err_mas, nMeasurements: Number(s.n_measurements ?? 0),
    ...(s.separation_deg !== undefined ? { separation_deg: s.separation_deg } : {}),
  };
}

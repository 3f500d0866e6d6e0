import type { Knex } from 'knex';
import { badRequest } from '../errors.js';
import { route } from '../lib/route.js';
import { idPath, orderQuery, pageQuery, query } from '../lib/query.js';
import { STAR_FLAGS, type catalogService } from './service.js';
import { coneCentre } from './cone.js';
import { overviewFor } from './queries.js';

export interface CatalogDeps {
  db: Knex;
  catalog: ReturnType<typeof catalogService>;
}

const STAR_SORTS = ['id', 'name', 'source_id', 'ra_deg', 'dec_deg', 'glon_deg', 'glat_deg', 'parallax_mas', 'n_measurements'];

interface StarsQuery {
  q?: string;
  ra?: string | number;
  dec?: string | number;
  l?: number;
  b?: number;
  radius?: number;
  flag?: string;
  sort: string;
  order: string;
  limit: number;
  offset: number;
}

/** The overview, the star list with search and cone search, a star's page. GET /instruments: server/instruments. */
export const catalogRoutes = [
  route<CatalogDeps>({
    method: 'get', path: '/overview', tag: 'Catalog', who: 'signed-in',
    summary: 'Survey name, star and instrument counts',
    description: 'Counts only the stars this person may know exist; `todo` lists what waits for them.',
    responses: { 200: { description: 'the overview', schema: 'responses/overview' } },
    handler: ({ user }, { db }) => overviewFor(db, user),
  }),

  route<CatalogDeps, object, StarsQuery>({
    method: 'get', path: '/stars', tag: 'Catalog', who: 'signed-in',
    summary: 'Catalog stars: search by name or source id, or a cone search',
    description: 'A cone search needs a centre and radius together and answers nearest first with `separation_deg`. The centre is ra and dec (ICRS; decimal degrees or sexagesimal as in uploads: RA in hours `14:29:42.6`, Dec `-18:18:24`) or Galactic l and b (degrees). `flag` keeps stars with a visible measurement carrying that flag (GET /plausibility). Stars known only from batches you may not see are hidden.',
    query: {
      q: query('text: part of a star name, or an exact source_id', { type: 'string' }),
      ra: query('ICRS right ascension of the cone centre: deg in [0, 360), or sexagesimal hours (14:29:42.6, 14h29m42.6s); with dec and radius', { type: ['number', 'string'], minimum: 0, exclusiveMaximum: 360 }),
      dec: query('ICRS declination of the cone centre: deg in [−90, 90], or sexagesimal degrees (-18:18:24); with ra and radius', { type: ['number', 'string'], minimum: -90, maximum: 90 }),
      l: query('deg, Galactic longitude of the cone centre, [0, 360); with b and radius, instead of ra and dec', { type: 'number', minimum: 0, exclusiveMaximum: 360 }, { expected: 'degrees, 0 ≤ l < 360' }),
      b: query('deg, Galactic latitude of the cone centre, [−90, 90]; with l and radius', { type: 'number', minimum: -90, maximum: 90 }, { expected: 'degrees, −90 ≤ b ≤ 90' }),
      radius: query('deg, cone radius, (0, 30]; with a centre', { type: 'number', exclusiveMinimum: 0, maximum: 30 }, { expected: '0 < radius ≤ 30 (deg)' }),
      flag: query('only stars with a measurement carrying this flag', { type: 'string', enum: STAR_FLAGS }),
      sort: query('column to sort by (default id; a cone search without sort is nearest first)', { type: 'string', enum: STAR_SORTS, default: 'id' }),
      ...orderQuery('asc'),
      ...pageQuery(50, 1000, 'stars'),
    },
    responses: { 200: { description: 'one page of stars', schema: 'responses/stars' } },
    errors: [400],
    handler: ({ query: q, user }, { catalog }) => {
      // ra/dec in degrees or sexagesimal, or Galactic l/b (server/catalog/cone.ts)
      const { ra, dec } = coneCentre(q as unknown as Record<string, unknown>);
      const given = [ra, dec, q.radius].filter((x) => x !== undefined).length;
      if (given > 0 && given < 3) throw badRequest('a cone search needs ra, dec and radius (degrees, ICRS)', { fields: [{ field: ra === undefined ? 'ra' : dec === undefined ? 'dec' : 'radius', message: 'required for a cone search' }] });
      return catalog.stars(user, { q: q.q?.trim() || undefined, ra, dec, radius: q.radius, sort: q.sort, order: q.order === 'desc' ? 'desc' : 'asc', limit: q.limit, offset: q.offset, flag: q.flag });
    },
  }),

  route<CatalogDeps, { id: number }>({
    method: 'get', path: '/stars/:id', tag: 'Catalog', who: 'signed-in',
    summary: 'A star, every measurement you may see, and combined values',
    description: 'Combined per band and instrument from approved measurements: inverse-variance weighted q, u with the χ² consistency flag. A star none of whose measurements you may see answers 404 (curators and admins see every star).',
    params: idPath('star'),
    responses: { 200: { description: 'the star', schema: 'responses/star-detail' } },
    errors: [400, 404],
    handler: ({ params, user }, { catalog }) => catalog.star(user, params.id),
  }),
];

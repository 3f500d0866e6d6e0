import type { JsonSchema, Param } from './types.js';

/** Query parameters arrive as text; these are the values they must parse to. */

export const idPath = (what: string, name = 'id'): Param => ({
  name,
  in: 'path',
  required: true,
  description: `${what} id (positive integer)`,
  schema: { type: 'integer', minimum: 1 },
});

export const limitQuery = (fallback: number, max: number, what = 'items'): Param => ({
  name: 'limit',
  in: 'query',
  description: `count of ${what} per page, 1 to ${max} (default ${fallback})`,
  schema: { type: 'integer', minimum: 1, maximum: max, default: fallback },
});

export const offsetQuery = (what = 'items'): Param => ({
  name: 'offset',
  in: 'query',
  description: `count of ${what} to skip, ≥ 0 (default 0)`,
  schema: { type: 'integer', minimum: 0, default: 0 },
});

export const orderQuery = (fallback: 'asc' | 'desc', note = ''): Param => ({
  name: 'order',
  in: 'query',
  description: `sort direction (default ${fallback})${note}`,
  schema: { enum: ['asc', 'desc'], default: fallback },
});

export const query = (name: string, description: string, schema: JsonSchema, required = false): Param => ({ name, in: 'query', description, schema, required });

export const coneQuery = (maxRadiusDeg: number, note = ''): Param[] => [
  query('ra', `deg, ICRS right ascension of the cone centre, [0, 360)${note}`, { type: 'number', minimum: 0, exclusiveMaximum: 360 }),
  query('dec', `deg, ICRS declination of the cone centre, [−90, 90]${note}`, { type: 'number', minimum: -90, maximum: 90 }),
  query('radius', `deg, cone radius, (0, ${maxRadiusDeg}]${note}`, { type: 'number', exclusiveMinimum: 0, maximum: maxRadiusDeg }),
];

/** run=, release= — which tomography run an answer comes from. */
export const runChoiceQuery: Param[] = [
  query('run', 'tomography run id (positive integer); default the latest finished run', { type: 'integer', minimum: 1 }),
  query('release', "release tag: answer from that frozen release's run (and, with include=stars, its frozen star copies)", { type: 'string' }),
];

/** convention= — the Stokes/angle convention of an answer. */
export const conventionQuery = query(
  'convention',
  'Stokes and angle convention of the answer (default iau). iau: angles from north through east, U as measured. cosmo: every U-like value changes sign (U_COSMO = −U_IAU) and angles become (180° − θ_IAU) mod 180, jumps −Δθ; p, errors and significances do not change',
  { enum: ['iau', 'cosmo'], default: 'iau' },
);

/** The cell criteria shared by the sightline, sky and mask routes. */
export const criteriaQuery = (minLayersDefault: number): Param[] => [
  query('minStars', 'count: keep cells with at least this many stars (default 0)', { type: 'integer', minimum: 0, default: 0 }),
  query('minLayers', `count: keep cells with at least this many layers (default ${minLayersDefault})`, { type: 'integer', minimum: 0, default: minLayersDefault }),
  query('minJumpDeg', 'deg, [0, 90]: keep cells with a jump between successive layers of |Δθ| ≥ this (together with minSignificance, on the same jump; default 0 = no jump criterion)', { type: 'number', minimum: 0, maximum: 90, default: 0 }),
  query('minSignificance', 'σ: keep cells with a jump of |Δθ|/σ ≥ this (default 0)', { type: 'number', minimum: 0, default: 0 }),
  query('minDistancePc', 'pc: keep cells with a layer at least this far (layer distance = its near edge, median over draws)', { type: 'number', minimum: 0 }),
  query('maxDistancePc', 'pc: keep cells with a layer at most this far; not below minDistancePc', { type: 'number', minimum: 0 }),
];

export const formatQuery = (formats: readonly string[], note: string): Param => query('format', note, { enum: [...formats], default: formats[0] });

import type { JsonSchema, ParamSpec } from './route.js';
import { badRequest } from '../errors.js';

/**
 * Path and query parameters several routes share, as declarations (server/lib/route.ts). They
 * arrive as text; the schema says what they must parse to, and the mount function coerces,
 * fills defaults and answers 400 naming the parameter otherwise. A repeated query parameter
 * (`?q=a&q=b`) is a 400 naming it on every declared route.
 */

type Params = Record<string, ParamSpec>;

/** `{id}` in the path: a positive integer. */
export const idPath = (what: string, name = 'id'): Params => ({
  [name]: { description: `${what} id (positive integer)`, schema: { type: 'integer', minimum: 1 } },
});

/** `{code}` in the path: an instrument code. */
export const instrumentCodePath: Params = { code: { description: 'instrument code (case ignored)', schema: { type: 'string' } } };

export const limitQuery = (fallback: number, max: number, what = 'items'): Params => ({
  limit: { description: `count of ${what} per page, 1 to ${max} (default ${fallback})`, schema: { type: 'integer', minimum: 1, maximum: max, default: fallback } },
});

export const offsetQuery = (what = 'items'): Params => ({
  offset: { description: `count of ${what} to skip, ≥ 0 (default 0)`, schema: { type: 'integer', minimum: 0, maximum: Number.MAX_SAFE_INTEGER, default: 0 } },
});

/** limit and offset together. */
export const pageQuery = (fallback: number, max: number, what = 'items'): Params => ({ ...limitQuery(fallback, max, what), ...offsetQuery(what) });

export const query = (description: string, schema: JsonSchema, extra: Partial<ParamSpec> = {}): ParamSpec => ({ description, schema, ...extra });

/** order= asc|desc. Routes have always read anything but the other word as the default, so the schema takes any text. */
export const orderQuery = (fallback: 'asc' | 'desc'): Params => {
  const other = fallback === 'asc' ? 'desc' : 'asc';
  return { order: { description: `sort direction: ${other}, or ${fallback} (the default; any value other than ${other} counts as ${fallback})`, schema: { type: 'string', examples: [fallback, other], default: fallback } } };
};

export const coneQuery = (maxRadiusDeg: number, note = ''): Params => ({
  ra: { description: `deg, ICRS right ascension of the cone centre, [0, 360)${note}`, schema: { type: 'number', minimum: 0, exclusiveMaximum: 360 }, expected: '0 ≤ ra < 360 (deg, ICRS)' },
  dec: { description: `deg, ICRS declination of the cone centre, [−90, 90]${note}`, schema: { type: 'number', minimum: -90, maximum: 90 }, expected: '−90 ≤ dec ≤ 90 (deg, ICRS)' },
  radius: { description: `deg, cone radius, (0, ${maxRadiusDeg}]${note}`, schema: { type: 'number', exclusiveMinimum: 0, maximum: maxRadiusDeg }, expected: `0 < radius ≤ ${maxRadiusDeg} (deg)` },
});

/** release= — answer from a frozen release's run. */
export const releaseQuery: Params = {
  release: { description: "release tag: answer from that frozen release's run (and, with include=stars, its frozen star copies)", schema: { type: 'string' } },
};

/** run= — which tomography run; 0 is refused (GET /sky, /masks). */
export const runQuery: Params = {
  run: { description: 'tomography run id (positive integer); default the latest finished run', schema: { type: 'integer', minimum: 1 } },
  ...releaseQuery,
};

/** convention= — the Stokes/angle convention of an answer. */
export const conventionQuery: Params = {
  convention: {
    description:
      'Stokes and angle convention of the answer (default iau; case ignored). iau: angles from north through east, U as measured. cosmo: every U-like value changes sign (U_COSMO = −U_IAU) and angles become (180° − θ_IAU) mod 180, jumps −Δθ; p, errors and significances do not change',
    schema: { type: 'string', enum: ['iau', 'cosmo'], default: 'iau' },
    lowercase: true,
  },
};

/** The cell criteria shared by the sightline, sky and mask routes (server/masks/format.ts CellCriteria). */
export const criteriaQuery = (minLayersDefault: number): Params => ({
  minStars: { description: 'count: keep cells with at least this many stars (default 0)', schema: { type: 'integer', minimum: 0, default: 0 } },
  minLayers: { description: `count: keep cells with at least this many layers (default ${minLayersDefault})`, schema: { type: 'integer', minimum: 0, default: minLayersDefault } },
  minJumpDeg: { description: 'deg, [0, 90]: keep cells with a jump between successive layers of |Δθ| ≥ this (together with minSignificance, on the same jump; default 0 = no jump criterion)', schema: { type: 'number', minimum: 0, maximum: 90, default: 0 } },
  minSignificance: { description: 'σ: keep cells with a jump of |Δθ|/σ ≥ this (default 0)', schema: { type: 'number', minimum: 0, default: 0 } },
  minDistancePc: { description: 'pc: keep cells with a layer at least this far (layer distance = its near edge, median over draws)', schema: { type: 'number', minimum: 0 } },
  maxDistancePc: { description: 'pc: keep cells with a layer at most this far; not below minDistancePc (else 400 naming maxDistancePc)', schema: { type: 'number', minimum: 0 } },
});

/** format= — one of a fixed set of words, the first the default (case ignored). */
export const formatQuery = (formats: readonly string[], description: string): Params => ({
  format: { description: `${description} (case ignored)`, schema: { type: 'string', enum: [...formats], default: formats[0] }, lowercase: true },
});

/** The cell criteria as the mount function hands them over (coerced, defaults filled). */
export interface CriteriaValues {
  minStars: number;
  minLayers: number;
  minJumpDeg: number;
  minSignificance: number;
  minDistancePc?: number;
  maxDistancePc?: number;
}

/** The criteria of an answer (server/masks/format.ts CellCriteria); the one rule across two parameters is checked here. */
export function criteriaOf(q: CriteriaValues) {
  const c = { minStars: q.minStars, minLayers: q.minLayers, minJumpDeg: q.minJumpDeg, minSignificance: q.minSignificance, minDistancePc: q.minDistancePc ?? null, maxDistancePc: q.maxDistancePc ?? null };
  if (c.minDistancePc !== null && c.maxDistancePc !== null && c.maxDistancePc < c.minDistancePc) {
    throw badRequest(`maxDistancePc (${c.maxDistancePc}) must not be below minDistancePc (${c.minDistancePc})`, { fields: [{ field: 'maxDistancePc', message: 'expected ≥ minDistancePc' }] });
  }
  return c;
}

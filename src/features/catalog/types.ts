/** Shapes of the catalog API, from the generated document types (src/lib/api/types.ts). Source identifiers stay text; positions ICRS degrees. */
import type { StarDetail, StarQuery } from '../../lib/api/types';

export type { Star, StarDetail } from '../../lib/api/types';

export type StarSort = NonNullable<StarQuery['sort']>;

/** A cone search as typed (degrees, ICRS); the server checks the ranges and names a bad field. */
export interface Cone {
  /** RA (ICRS, degrees or sexagesimal hours) — or Galactic l in degrees when frame is galactic */
  ra: string;
  /** Dec (ICRS, degrees or sexagesimal) — or Galactic b in degrees when frame is galactic */
  dec: string;
  radius: string;
  frame?: 'icrs' | 'galactic';
}

export interface StarListParams {
  q?: string;
  cone?: Cone;
  /** only stars with a measurement carrying this quality or plausibility flag */
  flag?: string;
  sort: StarSort;
  order: 'asc' | 'desc';
  limit: number;
  offset: number;
}

export type StarMeasurement = StarDetail['measurements'][number];

/** Inverse-variance weighted q, u of the approved measurements in one band and instrument, with the χ² consistency test. */
export type CombinedValue = StarDetail['combined'][number];

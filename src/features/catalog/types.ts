/** Shapes of the catalog API (base /api/v1). Source identifiers stay text; positions ICRS degrees. */
import type { MeasurementState } from '../review/types';
import type { CombinedMeasurement } from '@science/combine';

export interface Star {
  id: number;
  name: string;
  /** 64-bit identifier, text end to end */
  sourceId: string | null;
  ra_deg: number;
  dec_deg: number;
  glon_deg: number;
  glat_deg: number;
  parallax_mas: number | null;
  parallax_err_mas: number | null;
  nMeasurements: number;
  /** only in a cone search: distance from the centre */
  separation_deg?: number;
}

export type StarSort = 'id' | 'name' | 'source_id' | 'ra_deg' | 'dec_deg' | 'glon_deg' | 'glat_deg' | 'parallax_mas' | 'n_measurements';

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

export interface StarMeasurement {
  id: number;
  state: MeasurementState;
  version: number;
  batchId: number;
  band: string;
  instrument: string;
  mjd: number | null;
  q: number;
  u: number;
  q_err: number;
  u_err: number;
  p: number;
  p_err: number;
  p_debiased: number;
  theta_deg: number;
  theta_err_deg: number;
  q_gal: number;
  u_gal: number;
  theta_gal_deg: number;
  distance_pc: number | null;
  distance_lo_pc: number | null;
  distance_hi_pc: number | null;
  distance_method: string | null;
  flags: string[];
}

/** Inverse-variance weighted q, u of the approved measurements in one band and instrument, with the χ² consistency test. */
export interface CombinedValue extends CombinedMeasurement {
  band: string;
  instrument: string;
}

export interface StarDetail {
  star: Star;
  measurements: StarMeasurement[];
  combined: CombinedValue[];
  /** unit and convention of each field, as the server states them */
  units: Record<string, string>;
}

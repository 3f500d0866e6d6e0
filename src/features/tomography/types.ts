/** Shapes of the tomography API (base /api/v1). Stokes q, u are fractions; angles in degrees (IAU). */
import type { TomographyJump, TomographyLayer, TomographySegment, TomographyStar } from '@science/tomography/types';

export type { TomographyJump, TomographyLayer, TomographySegment, TomographyStar };

export type RunState = 'queued' | 'running' | 'done' | 'cancelled' | 'failed';
/** G = Galactic, C = equatorial ICRS: the frame of the cells and of the angles. */
export type CoordSys = 'G' | 'C';
export const NSIDES = [16, 32, 64, 128, 256] as const;
export const BANDS = ['U', 'B', 'V', 'R', 'I'] as const;

/** A cone on the sky, ICRS degrees. */
export interface Cone {
  ra: number;
  dec: number;
  radius: number;
}

export interface RunParams {
  nside: number;
  coordsys: CoordSys;
  band: string;
  minStars: number;
  draws: number;
  jumpThresholdDeg: number;
  minSegmentLength: number;
  region: Cone | null;
  /** every band brought to this one with the Serkowski law (λmax and K recorded beside it) */
  referenceBand?: string | null;
  lambdaMaxUm?: number;
  serkowskiK?: number;
}

export interface Run {
  id: number;
  state: RunState;
  params: RunParams;
  /** sha-256 of the parameters and of every measurement version the run used (null until gathered) */
  fingerprint: string | null;
  progress: { cellsDone: number; cellsTotal: number; etaSeconds: number | null };
  starsUsed: number | null;
  measurementsUsed: number | null;
  startedBy?: number;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
  error: string | null;
}

export const WORKING_RUN_STATES: readonly RunState[] = ['queued', 'running'];

/** One cell of the sky map (GET /tomography/runs/:id/cells). lon/lat are in the run's frame. */
export interface SkyCell {
  ipix: number;
  lon_deg: number;
  lat_deg: number;
  ra_deg: number;
  dec_deg: number;
  n_stars: number;
  n_layers: number;
  layer_support: number;
  complex: boolean;
  max_jump_deg: number | null;
  max_jump_significance: number | null;
  nearest_layer_pc: number | null;
  farthest_layer_pc: number | null;
}

export type Conventions = Record<string, string>;

export interface RunCells {
  run: Run;
  conventions: Conventions;
  cells: SkyCell[];
}

/** One sightline (GET /sightlines). */
export interface Sightline {
  nside: number;
  ipix: number;
  centre: { lonDeg: number; latDeg: number; raDeg: number; decDeg: number };
  nStars: number;
  nLayers: number;
  layerCountSupport: number;
  /** draws per number of layers (index = number of layers) */
  layerCountHistogram: number[];
  complex: boolean;
  /** the nearest segment is unpolarized foreground (then segments = layers + 1) */
  clearForeground: boolean;
  layers: TomographyLayer[];
  jumps: TomographyJump[];
  segments: TomographySegment[];
  draws: number;
  matchedDraws: number;
  /** which fit made the cell (classic: runs made before the survey fit) */
  method?: 'survey' | 'classic';
  /** ids of stars whose parallax was too poor to place a break */
  starsNotPlaced?: string[];
  stars?: TomographyStar[];
}

export interface SightlineAnswer {
  run: { id: number; params: RunParams; fingerprint: string; finishedAt: string };
  conventions: Conventions;
  cells: Sightline[];
}

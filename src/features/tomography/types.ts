/** Shapes of the tomography API, from the generated document types (src/lib/api/types.ts). Stokes q, u are fractions; angles in degrees (IAU). */
import type { RunParams, RunState } from '../../lib/api/types';

export type {
  Run,
  RunCells,
  RunParams,
  RunState,
  Sightline,
  SightlineAnswer,
  SkyCell,
  TomographyJump,
  TomographyLayer,
  TomographySegment,
  TomographyStar,
} from '../../lib/api/types';

/** G = Galactic, C = equatorial ICRS: the frame of the cells and of the angles. */
export type CoordSys = RunParams['coordsys'];
export const NSIDES = [16, 32, 64, 128, 256] as const satisfies readonly RunParams['nside'][];
export const BANDS = ['U', 'B', 'V', 'R', 'I'] as const satisfies readonly RunParams['band'][];

export const WORKING_RUN_STATES: readonly RunState[] = ['queued', 'running'];

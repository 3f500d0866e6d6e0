/**
 * A run's cells as answers show them: the cell and run shapes, the Stokes/angle convention of an
 * answer (IAU or COSMO) and the notes that state it. Pure: no Express, no Knex.
 */
import { angleInConvention, jumpInConvention, uInConvention, type StokesConvention } from '../science/convention.js';
import type { TomographyJump, TomographyLayer, TomographySegment } from '../science/tomography/types.js';
import type { CellLike } from './criteria.js';
import type { RunParams } from './service.js';

interface StarLike {
  u: number;
  [k: string]: unknown;
}

export interface CellForOutput extends CellLike {
  nside: number;
  ipix: number;
  centre: { lonDeg: number; latDeg: number; raDeg: number; decDeg: number };
  layerCountSupport: number;
  complex: boolean;
  layers: TomographyLayer[];
  jumps: TomographyJump[];
  segments?: TomographySegment[];
  stars?: StarLike[];
  [k: string]: unknown;
}

export interface RunForOutput {
  id: number;
  params: RunParams;
  fingerprint: string | null;
  finishedAt: string | null;
  release: string | null;
}

/** A cell's largest |Δθ| between successive layers (with its significance) and its nearest and farthest layer (pc). */
export function layerExtremes(cell: { layers: Pick<TomographyLayer, 'distancePc'>[]; jumps: Pick<TomographyJump, 'deltaThetaDeg' | 'significance'>[] }) {
  let maxJump: { deg: number; sig: number } | null = null;
  for (const j of cell.jumps) if (!maxJump || Math.abs(j.deltaThetaDeg) > maxJump.deg) maxJump = { deg: Math.abs(j.deltaThetaDeg), sig: j.significance };
  const n = cell.layers.length;
  return { maxJump, nearestLayerPc: n ? cell.layers[0].distancePc : null, farthestLayerPc: n ? cell.layers[n - 1].distancePc : null };
}

/** Run metadata shared by every answer. */
export const runSummary = (run: RunForOutput) => ({ id: run.id, params: run.params, fingerprint: run.fingerprint, finishedAt: run.finishedAt });

const FRAME_NAME = { G: 'Galactic (l, b)', C: 'equatorial ICRS (RA, Dec)' } as const;
export const frameName = (coordsys: 'G' | 'C') => FRAME_NAME[coordsys];

/** Conventions stated in every sightline answer, so a script never has to guess. */
export const SIGHTLINE_CONVENTIONS = {
  stokes: 'q, u are fractions (Q/I, U/I); deltaQ/deltaU are a layer’s own contribution',
  angles: 'degrees, IAU convention (from the frame’s north through east), in [0, 180); jumps wrapped to (−90, 90]',
  frame: 'angles and Stokes refer to the run’s coordinate system: G = Galactic, C = equatorial ICRS',
  pixels: 'HEALPix nested ordering in the run’s coordinate system',
  distances: 'parsec; a layer’s distance is the median of its near edge over Monte Carlo draws, with the 16th–84th percentile range',
  magneticField: 'starlight polarization is parallel to the plane-of-sky magnetic field; thermal dust emission is polarized perpendicular to it (field angle = emission angle + 90°)',
};

/**
 * The cell in the requested convention (server/science/convention.ts): every U-like value
 * (meanU, deltaU, a star's u) changes sign, angles θ → (180° − θ) mod 180, jumps Δθ → −Δθ.
 * IAU returns the cell unchanged.
 */
export function cellInConvention<T extends CellForOutput>(cell: T, conv: StokesConvention): T {
  if (conv === 'iau') return cell;
  return {
    ...cell,
    layers: cell.layers.map((l) => ({ ...l, meanU: uInConvention(l.meanU, conv), deltaU: uInConvention(l.deltaU, conv), thetaDeg: angleInConvention(l.thetaDeg, conv) })),
    jumps: cell.jumps.map((j) => ({ ...j, deltaThetaDeg: jumpInConvention(j.deltaThetaDeg, conv) })),
    ...(cell.segments ? { segments: cell.segments.map((s) => ({ ...s, meanU: uInConvention(s.meanU, conv) })) } : {}),
    ...(cell.stars ? { stars: cell.stars.map((s) => ({ ...s, u: uInConvention(s.u, conv) })) } : {}),
  };
}

/** The conventions note of an answer, rewritten for COSMO where it differs from IAU. */
export function conventionNotes<T extends Record<string, string>>(base: T, conv: StokesConvention): T & { convention: string } {
  if (conv === 'iau') return { ...base, convention: 'IAU (IAU 1973): angles from north through east; Stokes as measured' };
  return {
    ...base,
    stokes: `${base.stokes ?? ''}; COSMO convention: every U-like value (u, meanU, deltaU) has the opposite sign of the IAU value (U_COSMO = −U_IAU), q unchanged`,
    angles: 'degrees in [0, 180), COSMO convention: θ_COSMO = (180° − θ_IAU) mod 180 (from the frame’s north through west); jumps Δθ_COSMO = −Δθ_IAU wrapped to (−90, 90]',
    convention: 'COSMO: U_COSMO = −U_IAU; angles reflected; p, errors and significances unchanged',
  };
}

/**
 * Which cells of a run an answer keeps (GET /sightlines, /sky, /masks): criteria on a cell's
 * stars, layers, jumps and layer distances. Pure: cells in, a yes or no out.
 */
import type { TomographyJump, TomographyLayer } from '../science/tomography/types.js';

/**
 * A cell meets the criteria when it has
 *   at least minStars stars and at least minLayers layers;
 *   when minJumpDeg > 0 or minSignificance > 0: at least one jump between successive layers with
 *     |Δθ| ≥ minJumpDeg and |Δθ|/σ ≥ minSignificance (the same jump);
 *   when a distance bound is given: at least one layer with minDistancePc ≤ distance ≤ maxDistancePc
 *     (a layer's distance is its near edge, the median over Monte Carlo draws).
 */
export interface CellCriteria {
  minStars: number;
  minLayers: number;
  minJumpDeg: number;
  minSignificance: number;
  minDistancePc: number | null;
  maxDistancePc: number | null;
}

export interface CellLike {
  nStars: number;
  nLayers: number;
  layers: Pick<TomographyLayer, 'distancePc'>[];
  jumps: Pick<TomographyJump, 'deltaThetaDeg' | 'significance'>[];
}

const jumpCriterionActive = (c: CellCriteria) => c.minJumpDeg > 0 || c.minSignificance > 0;
const distanceCriterionActive = (c: CellCriteria) => c.minDistancePc !== null || c.maxDistancePc !== null;

export function cellMeetsCriteria(cell: CellLike, c: CellCriteria): boolean {
  if (cell.nStars < c.minStars || cell.nLayers < c.minLayers) return false;
  if (jumpCriterionActive(c) && !cell.jumps.some((j) => Math.abs(j.deltaThetaDeg) >= c.minJumpDeg && j.significance >= c.minSignificance)) return false;
  if (distanceCriterionActive(c)) {
    const lo = c.minDistancePc ?? 0;
    const hi = c.maxDistancePc ?? Infinity;
    if (!cell.layers.some((l) => l.distancePc >= lo && l.distancePc <= hi)) return false;
  }
  return true;
}

export const filterCells = <T extends CellLike>(cells: T[], c: CellCriteria): T[] => cells.filter((cell) => cellMeetsCriteria(cell, c));

/** The criteria in words (ASCII only, so they also fit FITS cards and CSV comments). */
export function describeCriteria(c: CellCriteria): string {
  const parts = [`at least ${c.minStars} stars`, `at least ${c.minLayers} layers`];
  if (jumpCriterionActive(c)) parts.push(`a jump with |dtheta| >= ${c.minJumpDeg} deg and significance >= ${c.minSignificance}`);
  if (distanceCriterionActive(c)) parts.push(`a layer between ${c.minDistancePc ?? 0} and ${c.maxDistancePc ?? 'any'} pc`);
  return parts.join('; ');
}

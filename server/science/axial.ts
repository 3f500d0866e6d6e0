/**
 * Axial (180°-periodic) statistics for polarization angles. An axial angle θ and θ + 180° are
 * the same orientation, so statistics work on the doubled angle 2θ (Mardia & Jupp 2000,
 * Directional Statistics, §9.3 "axial data") and halve the result.
 */

const RAD_TO_DEG = 180 / Math.PI;
const DEG_TO_RAD = Math.PI / 180;

/** Wrap an angle in degrees to [0, 180). */
export function wrapAngle180(deg: number): number {
  const w = ((deg % 180) + 180) % 180;
  return w === 180 ? 0 : w;
}

/** Difference a − b of two axial angles in degrees, wrapped to (−90, 90]. */
export function angleDifferenceDeg(a: number, b: number): number {
  const d = wrapAngle180(a - b); // [0, 180)
  return d > 90 ? d - 180 : d;
}

interface DoubledSums {
  c: number;
  s: number;
  wSum: number;
}

function doubledSums(anglesDeg: number[], weights?: number[]): DoubledSums {
  if (anglesDeg.length === 0) throw new RangeError('axial statistics need at least one angle');
  if (weights !== undefined && weights.length !== anglesDeg.length) {
    throw new RangeError(
      `axial statistics: ${weights.length} weights given for ${anglesDeg.length} angles; expected one weight per angle`,
    );
  }
  let c = 0;
  let s = 0;
  let wSum = 0;
  for (let i = 0; i < anglesDeg.length; i++) {
    const w = weights === undefined ? 1 : weights[i];
    if (!(w >= 0)) throw new RangeError(`axial statistics: weight ${w} at index ${i}; expected a number ≥ 0`);
    const a = 2 * anglesDeg[i] * DEG_TO_RAD;
    c += w * Math.cos(a);
    s += w * Math.sin(a);
    wSum += w;
  }
  if (!(wSum > 0)) throw new RangeError('axial statistics: weights sum to zero');
  return { c, s, wSum };
}

/**
 * Below this mean resultant length of the doubled angles the mean direction is taken as undefined:
 * cos/sin of the doubled angles carry rounding of order 1e-16 each, so exactly opposed
 * orientations (e.g. 0° and 90°) leave a resultant of ~1e-16 whose atan2 is a meaningless
 * direction (45° for 0° and 90°). 1e-10 is far above that rounding and far below any resultant
 * real data would give (common practice: treat a zero resultant as "no mean direction").
 */
export const AXIAL_RESULTANT_UNDEFINED_BELOW = 1e-10;

export interface AxialMean {
  /** mean axial direction in [0, 180), NaN when undefined */
  meanDeg: number;
  /** mean resultant length R of the doubled angles */
  resultantLength: number;
  /** why the mean is undefined, when it is */
  undefinedReason?: string;
}

/**
 * Mean axial direction θ̄ = ½·atan2(Σ w sin 2θ, Σ w cos 2θ), degrees in [0, 180), with its
 * resultant length (Mardia & Jupp 2000, §9.3). Undefined (NaN, with the reason) when the doubled
 * angles cancel: the data have no mean orientation, e.g. exactly opposed angles 0° and 90°.
 */
export function axialMean(anglesDeg: number[], weights?: number[]): AxialMean {
  const { c, s, wSum } = doubledSums(anglesDeg, weights);
  const resultantLength = Math.min(1, Math.hypot(c, s) / wSum);
  if (resultantLength < AXIAL_RESULTANT_UNDEFINED_BELOW) {
    return {
      meanDeg: NaN,
      resultantLength,
      undefinedReason: 'the doubled angles cancel (mean resultant length 0, e.g. exactly opposed orientations 90° apart): there is no mean orientation',
    };
  }
  return { meanDeg: wrapAngle180(0.5 * Math.atan2(s, c) * RAD_TO_DEG), resultantLength };
}

/** Mean axial direction in degrees in [0, 180); NaN when undefined (see axialMean for the reason). */
export function axialMeanDeg(anglesDeg: number[], weights?: number[]): number {
  return axialMean(anglesDeg, weights).meanDeg;
}

/**
 * Mean resultant length of the doubled angles, R = |Σ w e^{2iθ}| / Σ w, in [0, 1]
 * (Mardia & Jupp 2000). R = 1 for identical orientations, ≈ 0 for uniform ones.
 */
export function axialResultantLength(anglesDeg: number[], weights?: number[]): number {
  const { c, s, wSum } = doubledSums(anglesDeg, weights);
  return Math.min(1, Math.hypot(c, s) / wSum);
}

/**
 * Circular standard deviation of axial data, ½·sqrt(−2 ln R) rad, returned in degrees
 * (Mardia & Jupp 2000; equals scipy.stats.circstd of 2θ, halved). Infinity when R = 0.
 */
export function axialCircularStdDeg(anglesDeg: number[], weights?: number[]): number {
  const r = axialResultantLength(anglesDeg, weights);
  // Identical orientations give R = 1 only up to rounding; treat that as exactly 1.
  if (r >= 1 - 4 * Number.EPSILON) return 0;
  return 0.5 * Math.sqrt(-2 * Math.log(r)) * RAD_TO_DEG;
}

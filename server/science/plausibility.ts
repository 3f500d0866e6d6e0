/**
 * Physical-plausibility flags for a polarization measurement. Flags mark a value for a curator's
 * attention; nothing is dropped.
 */
import { combineMeasurements, INCONSISTENT_TAIL_PROBABILITY, type StokesMeasurement } from './combine.js';
import { GAUSSIAN_ANGLE_MIN_SNR } from './polarization.js';
import { exceedsPolarizationEfficiency, POLARIZATION_EFFICIENCY_MAX_PCT_PER_MAG } from './serkowski.js';

/** Default ceiling on a measured p (fraction). Interstellar p rarely exceeds ~10 % (common practice); 15 % leaves room. */
export const DEFAULT_P_CEILING = 0.15;

export const PLAUSIBILITY_FLAGS = {
  above_efficiency_envelope: `p/E(B−V) above ${POLARIZATION_EFFICIENCY_MAX_PCT_PER_MAG} % per magnitude (Serkowski, Mathewson & Ford 1975): intrinsic polarization or a bad value`,
  above_p_ceiling: 'p above the configured ceiling',
  low_p_snr: `p/σp below ${GAUSSIAN_ANGLE_MIN_SNR}: the angle distribution is not Gaussian (Naghizadeh-Khouei & Clarke 1993, A&A 274, 968)`,
  inconsistent_repeats: `repeated measurements of the star (same band and instrument) disagree: χ² tail probability below ${INCONSISTENT_TAIL_PROBABILITY} with 2(n − 1) degrees of freedom`,
} as const;
export type PlausibilityFlag = keyof typeof PLAUSIBILITY_FLAGS;

/** Flags that follow from one measurement alone. p and σp fractions, E(B−V) in magnitudes (or null). */
export function measurementPlausibilityFlags(m: { p: number; pErr: number; ebv: number | null }, opts: { pCeiling?: number } = {}): PlausibilityFlag[] {
  const out: PlausibilityFlag[] = [];
  if (m.ebv !== null && m.ebv > 0 && exceedsPolarizationEfficiency(m.p, m.ebv)) out.push('above_efficiency_envelope');
  if (m.p > (opts.pCeiling ?? DEFAULT_P_CEILING)) out.push('above_p_ceiling');
  if (m.pErr > 0 && m.p / m.pErr < GAUSSIAN_ANGLE_MIN_SNR) out.push('low_p_snr');
  return out;
}

/**
 * Repeats of one star in one band and instrument are χ²-inconsistent when
 * P(χ²_{2(n−1)} ≥ χ²) < 0.001 (METHODS.md; χ² as in combine.ts). Needs n ≥ 2.
 */
export function repeatsAreInconsistent(ms: StokesMeasurement[]): boolean {
  if (ms.length < 2) return false;
  return combineMeasurements(ms).inconsistent;
}

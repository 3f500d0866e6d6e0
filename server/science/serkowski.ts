/**
 * Wavelength dependence of interstellar polarization and the polarization-efficiency envelope.
 */

export type Band = 'U' | 'B' | 'V' | 'R' | 'I';

/**
 * Effective wavelengths of the Johnson–Cousins bands U, B, V, R_C, I_C in µm
 * (Bessell 1990, PASP 102, 1181; values from memory, rounded to 0.01 µm).
 */
export const BAND_EFFECTIVE_WAVELENGTH_UM: Readonly<Record<Band, number>> = Object.freeze({
  U: 0.36,
  B: 0.44,
  V: 0.55,
  R: 0.64,
  I: 0.79,
});

/** K of Serkowski, Mathewson & Ford 1975 (ApJ 196, 261). */
export const SERKOWSKI_K = 1.15;

/** Typical wavelength of maximum polarization, µm (Serkowski et al. 1975). */
export const TYPICAL_LAMBDA_MAX_UM = 0.55;

/** K(λmax) = 0.01 + 1.66·λmax[µm] (Whittet et al. 1992, ApJ 386, 562). */
export function whittetK(lambdaMaxUm: number): number {
  return 0.01 + 1.66 * lambdaMaxUm;
}

/**
 * Serkowski law p(λ) = p_max·exp[−K·ln²(λmax/λ)] (Serkowski, Mathewson & Ford 1975).
 * K defaults to 1.15; pass whittetK(λmax) for the Whittet et al. 1992 form.
 */
export function serkowskiFraction(
  pMax: number,
  lambdaUm: number,
  lambdaMaxUm: number = TYPICAL_LAMBDA_MAX_UM,
  k: number = SERKOWSKI_K,
): number {
  if (!(lambdaUm > 0) || !(lambdaMaxUm > 0)) {
    throw new RangeError(`Serkowski law: wavelengths ${lambdaUm}, ${lambdaMaxUm} µm; expected numbers > 0`);
  }
  const l = Math.log(lambdaMaxUm / lambdaUm);
  return pMax * Math.exp(-k * l * l);
}

export interface BandScalingOptions {
  /** 'serkowski' (K = 1.15, default) or 'whittet' (K = 0.01 + 1.66 λmax). */
  kLaw?: 'serkowski' | 'whittet';
}

/**
 * Bring a polarization fraction measured in one band to another under the Serkowski law:
 *   p_to = p_from · exp[−K ln²(λmax/λ_to)] / exp[−K ln²(λmax/λ_from)].
 * The angle is assumed wavelength-independent. Record λmax and the K law with the result.
 */
export function scaleFractionToBand(
  p: number,
  fromBand: Band,
  toBand: Band,
  lambdaMaxUm: number = TYPICAL_LAMBDA_MAX_UM,
  opts: BandScalingOptions = {},
): number {
  const from = BAND_EFFECTIVE_WAVELENGTH_UM[fromBand];
  const to = BAND_EFFECTIVE_WAVELENGTH_UM[toBand];
  if (from === undefined || to === undefined) {
    throw new RangeError(`band "${from === undefined ? fromBand : toBand}": expected one of U, B, V, R, I`);
  }
  const k = opts.kLaw === 'whittet' ? whittetK(lambdaMaxUm) : SERKOWSKI_K;
  return (p * serkowskiFraction(1, to, lambdaMaxUm, k)) / serkowskiFraction(1, from, lambdaMaxUm, k);
}

/** Upper envelope of polarization efficiency p_max/E(B−V), % per mag (Serkowski et al. 1975). */
export const POLARIZATION_EFFICIENCY_MAX_PCT_PER_MAG = 9.0;

/**
 * True when 100·p / E(B−V) > 9.0 %/mag (Serkowski et al. 1975): intrinsic polarization or a bad
 * value — flag the star, do not drop it. p is a fraction (not percent), E(B−V) in magnitudes.
 * With E(B−V) ≤ 0 any p > 0 is above the envelope; non-finite inputs are not flagged.
 */
export function exceedsPolarizationEfficiency(pFraction: number, ebv: number): boolean {
  if (!Number.isFinite(pFraction) || !Number.isFinite(ebv)) return false;
  if (ebv <= 0) return pFraction > 0;
  return (100 * pFraction) / ebv > POLARIZATION_EFFICIENCY_MAX_PCT_PER_MAG;
}

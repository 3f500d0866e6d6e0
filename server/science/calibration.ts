/**
 * Instrument calibration from standard stars (pure functions, no I/O).
 *
 * - Instrumental polarization: the inverse-variance weighted mean (q, u) of unpolarized standards
 *   (Schmidt, Elston & Lupie 1992, AJ 104, 1563 list such stars with p ≲ 0.1 %).
 * - Angle zero-point: the axial weighted mean of θ_obs − θ_ref over polarized standards, taken on
 *   doubled angles (Mardia & Jupp 2000, Directional Statistics), AFTER the instrumental (q, u) has
 *   been subtracted from each standard.
 * - Applying a calibration to a measurement: subtract the instrumental (q, u), then rotate the
 *   reference direction by the zero-point ψ:  q' = q cos2ψ + u sin2ψ,  u' = −q sin2ψ + u cos2ψ,
 *   which turns θ into θ − ψ (the same rotation form as the frame change in METHODS.md).
 */
import { angleDifferenceDeg, axialCircularStdDeg, axialMeanDeg, wrapAngle180 } from './axial.js';
import { chi2SurvivalProbability } from './chi2.js';
import { polarizationAngleDeg, propagateStokesErrors } from './polarization.js';
import { BAND_EFFECTIVE_WAVELENGTH_UM, serkowskiFraction, TYPICAL_LAMBDA_MAX_UM, whittetK, type Band } from './serkowski.js';

const DEG = Math.PI / 180;

/**
 * Key for recognising a standard star by name: case and spacing ignored, so `HD 204827`,
 * `hd204827` and `HD  204827` agree, and `BD+59 389` becomes `BD+59389`.
 */
export function standardNameKey(name: string): string {
  return name.normalize('NFKC').replace(/[\s_]+/g, '').toUpperCase();
}

/** A standard star's observation with the instrument, equatorial frame, fractions. */
export interface StandardObservation {
  q: number;
  u: number;
  qErr: number;
  uErr: number;
}

export interface InstrumentalPolarization {
  q: number;
  u: number;
  qErr: number;
  uErr: number;
  /** χ² of the standards about the mean, with 2(n − 1) degrees of freedom (METHODS.md, combining repeats) */
  chi2: number;
  dof: number;
  /** tail probability of chi2 (1 when dof = 0) */
  chi2Probability: number;
}

/**
 * Instrumental (q, u): inverse-variance weighted mean of unpolarized standards, q̄ = Σ q/σq² / Σ 1/σq²,
 * σq̄ = (Σ 1/σq²)^−½, and the same for u. `refPFraction` (the catalog's residual p of the star, whose
 * angle is not given) adds p_ref/√2 in quadrature to each component's error: an unknown orientation
 * spreads p_ref equally over q and u on average (common practice).
 */
export function instrumentalPolarization(obs: (StandardObservation & { refPFraction?: number })[]): InstrumentalPolarization {
  if (obs.length === 0) throw new RangeError('instrumental polarization needs at least one unpolarized standard');
  let wq = 0, wu = 0, sq = 0, su = 0;
  const eff = obs.map((o) => {
    const extra = ((o.refPFraction ?? 0) ** 2) / 2;
    const vq = o.qErr * o.qErr + extra;
    const vu = o.uErr * o.uErr + extra;
    if (!(vq > 0) || !(vu > 0)) throw new RangeError(`standard observation with σq = ${o.qErr}, σu = ${o.uErr}; expected errors > 0`);
    return { ...o, vq, vu };
  });
  for (const o of eff) {
    wq += 1 / o.vq; sq += o.q / o.vq;
    wu += 1 / o.vu; su += o.u / o.vu;
  }
  const q = sq / wq;
  const u = su / wu;
  let chi2 = 0;
  for (const o of eff) chi2 += (o.q - q) ** 2 / o.vq + (o.u - u) ** 2 / o.vu;
  const dof = 2 * (obs.length - 1);
  return { q, u, qErr: 1 / Math.sqrt(wq), uErr: 1 / Math.sqrt(wu), chi2, dof, chi2Probability: dof > 0 ? chi2SurvivalProbability(chi2, dof) : 1 };
}

export interface PolarizedStandardObservation extends StandardObservation {
  thetaRefDeg: number;
  thetaRefErrDeg?: number;
}

export interface ZeroPoint {
  /** in (−90°, 90°]: what must be subtracted from an observed angle */
  zeroPointDeg: number;
  /** max(internal, external) error, degrees */
  zeroPointErrDeg: number;
  /** (Σ w)^−½ with w = 1/(σθ_obs² + σθ_ref²) */
  internalErrDeg: number;
  /** axial circular standard deviation of the offsets / √n (n ≥ 2), else null */
  externalErrDeg: number | null;
  /** per standard: θ_obs (after instrumental subtraction), θ_obs − θ_ref, and the residual offset − zero-point */
  standards: { thetaObsDeg: number; thetaObsErrDeg: number; offsetDeg: number; residualDeg: number; weight: number }[];
}

/**
 * Angle zero-point from polarized standards after subtracting the instrumental (q, u):
 * Δ_i = θ_obs,i − θ_ref,i; ZP = ½·atan2(Σ w sin 2Δ, Σ w cos 2Δ) (axial weighted mean, Mardia & Jupp 2000),
 * w_i = 1/(σθ_obs,i² + σθ_ref,i²) with σθ_obs from linear propagation (Serkowski 1962).
 * Error: the larger of the internal (Σ w)^−½ and the external scatter (axial circular s.d. / √n) —
 * taking the larger of the two is common practice.
 */
export function angleZeroPoint(obs: PolarizedStandardObservation[], instrumental: { q: number; u: number; qErr: number; uErr: number } = { q: 0, u: 0, qErr: 0, uErr: 0 }): ZeroPoint {
  if (obs.length === 0) throw new RangeError('the angle zero-point needs at least one polarized standard');
  const per = obs.map((o) => {
    const q = o.q - instrumental.q;
    const u = o.u - instrumental.u;
    const fa = propagateStokesErrors(q, u, Math.hypot(o.qErr, instrumental.qErr), Math.hypot(o.uErr, instrumental.uErr));
    const varDeg = fa.thetaErrDeg ** 2 + (o.thetaRefErrDeg ?? 0) ** 2;
    const offsetDeg = angleDifferenceDeg(fa.thetaDeg, o.thetaRefDeg);
    return { thetaObsDeg: fa.thetaDeg, thetaObsErrDeg: fa.thetaErrDeg, offsetDeg, weight: varDeg > 0 ? 1 / varDeg : 1e12 };
  });
  const offsets = per.map((p) => p.offsetDeg);
  const weights = per.map((p) => p.weight);
  const mean = axialMeanDeg(offsets, weights);
  const zeroPointDeg = angleDifferenceDeg(mean, 0);
  const internalErrDeg = 1 / Math.sqrt(weights.reduce((a, b) => a + b, 0));
  const externalErrDeg = obs.length >= 2 ? axialCircularStdDeg(offsets) / Math.sqrt(obs.length) : null;
  return {
    zeroPointDeg,
    zeroPointErrDeg: Math.max(internalErrDeg, externalErrDeg ?? 0),
    internalErrDeg,
    externalErrDeg,
    standards: per.map((p) => ({ ...p, residualDeg: angleDifferenceDeg(p.offsetDeg, zeroPointDeg) })),
  };
}

export interface CalibrationTerms {
  instrumentalQ: number;
  instrumentalU: number;
  instrumentalQErr: number;
  instrumentalUErr: number;
  zeroPointDeg: number;
  zeroPointErrDeg: number;
}

/**
 * Calibrate one measurement: (q, u) − (q_inst, u_inst), then rotate by the zero-point ψ,
 *   q' = q₁ cos2ψ + u₁ sin2ψ,   u' = −q₁ sin2ψ + u₁ cos2ψ   ⇒ θ' = θ − ψ.
 * Errors by linear propagation (inputs and terms independent):
 *   σq₁² = σq² + σq_inst²,  σu₁² = σu² + σu_inst²,
 *   σq'² = cos²2ψ σq₁² + sin²2ψ σu₁² + (2u')² σψ²,   σu'² = sin²2ψ σq₁² + cos²2ψ σu₁² + (2q')² σψ²  (σψ in rad),
 * since ∂q'/∂ψ = 2u' and ∂u'/∂ψ = −2q'. The induced q'–u' covariance is dropped, as elsewhere.
 */
export function applyCalibration(s: StandardObservation, c: CalibrationTerms): StandardObservation {
  const q1 = s.q - c.instrumentalQ;
  const u1 = s.u - c.instrumentalU;
  const vq1 = s.qErr ** 2 + c.instrumentalQErr ** 2;
  const vu1 = s.uErr ** 2 + c.instrumentalUErr ** 2;
  const cos = Math.cos(2 * c.zeroPointDeg * DEG);
  const sin = Math.sin(2 * c.zeroPointDeg * DEG);
  const q = q1 * cos + u1 * sin;
  const u = -q1 * sin + u1 * cos;
  const vPsi = (c.zeroPointErrDeg * DEG) ** 2;
  return {
    q,
    u,
    qErr: Math.sqrt(cos * cos * vq1 + sin * sin * vu1 + 4 * u * u * vPsi),
    uErr: Math.sqrt(sin * sin * vq1 + cos * cos * vu1 + 4 * q * q * vPsi),
  };
}

/** Angle of a calibrated measurement, for checks: θ' = θ(q₁, u₁) − ψ wrapped to [0, 180). */
export function calibratedAngleDeg(s: StandardObservation, c: CalibrationTerms): number {
  return wrapAngle180(polarizationAngleDeg(s.q - c.instrumentalQ, s.u - c.instrumentalU) - c.zeroPointDeg);
}

/**
 * The observing night of a UTC MJD, as the ISO date of its evening: nights run from UTC noon to
 * UTC noon, night = ⌊MJD − 0.5⌋ (MJD 0 = 1858-11-17 00:00 UTC). Common practice for observatories
 * west of about 90° E; null without an epoch.
 */
export function nightOfMjd(mjd: number | null | undefined): string | null {
  if (mjd === null || mjd === undefined || !Number.isFinite(mjd)) return null;
  const day = Math.floor(mjd - 0.5);
  const ms = Date.UTC(1858, 10, 17) + day * 86400000;
  return new Date(ms).toISOString().slice(0, 10);
}

/** The MJD range [start, end) of a night returned by nightOfMjd. */
export function mjdRangeOfNight(night: string): [number, number] {
  const day = Math.round((Date.parse(`${night}T00:00:00Z`) - Date.UTC(1858, 10, 17)) / 86400000);
  return [day + 0.5, day + 1.5];
}

export interface BandNormalisation {
  factor: number;
  fromBand: Band;
  toBand: Band;
  lambdaMaxUm: number;
  k: number;
}

/**
 * Factor that brings p (and q, u, their errors) measured in `fromBand` to `toBand` under the Serkowski
 * law p(λ) = p_max·exp[−K ln²(λmax/λ)] (Serkowski, Mathewson & Ford 1975), with K = 0.01 + 1.66 λmax[µm]
 * by default (Whittet et al. 1992) and λmax = 0.55 µm; band wavelengths from Bessell 1990 (from memory).
 * The angle is taken as independent of wavelength.
 */
export function bandNormalisation(fromBand: string, toBand: string, lambdaMaxUm: number = TYPICAL_LAMBDA_MAX_UM, k?: number): BandNormalisation {
  const from = BAND_EFFECTIVE_WAVELENGTH_UM[fromBand as Band];
  const to = BAND_EFFECTIVE_WAVELENGTH_UM[toBand as Band];
  if (from === undefined || to === undefined) throw new RangeError(`band "${from === undefined ? fromBand : toBand}": expected one of U, B, V, R, I`);
  if (!(lambdaMaxUm > 0)) throw new RangeError(`λmax = ${lambdaMaxUm} µm; expected a number > 0`);
  const kk = k ?? whittetK(lambdaMaxUm);
  return { factor: serkowskiFraction(1, to, lambdaMaxUm, kk) / serkowskiFraction(1, from, lambdaMaxUm, kk), fromBand: fromBand as Band, toBand: toBand as Band, lambdaMaxUm, k: kk };
}


/** The run parameters of a band normalisation with the defaults filled in (band = referenceBand). */
export function normalisationParams(referenceBand: string, lambdaMaxUm?: number, k?: number) {
  const n = bandNormalisation(referenceBand, referenceBand, lambdaMaxUm ?? TYPICAL_LAMBDA_MAX_UM, k);
  return { band: referenceBand, referenceBand, lambdaMaxUm: n.lambdaMaxUm, serkowskiK: n.k };
}

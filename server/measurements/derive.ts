import { galacticToIcrs, icrsToGalactic, rotateStokesToEquatorial, rotateStokesToGalactic } from '../science/frames.js';
import { angleIsNonGaussian, polarizationAngleDeg, propagateStokesErrors, stokesFromFractionAngle } from '../science/polarization.js';
import { debiasedFractionMAS } from '../science/debias.js';
import { distanceFromDistance, distanceFromParallax, correctParallax, INVERSE_PARALLAX_MIN_SNR } from '../science/distance.js';
import { ang2pixNest } from '../science/healpix.js';
import { exceedsPolarizationEfficiency } from '../science/serkowski.js';
import type { CanonicalRow, RowIssue } from './normalise.js';

export const INDEX_NSIDE = 32768; // HEALPix order 15, nested, ICRS

/** Everything Starveil stores for a measurement, computed from one canonical row (server/science). */
export interface Derived {
  ra_deg: number;
  dec_deg: number;
  glon_deg: number;
  glat_deg: number;
  hpx15: number;
  band: string;
  instrument: string;
  mjd: number | null;
  /** equatorial reference, IAU convention, fractions */
  q: number;
  u: number;
  q_err: number;
  u_err: number;
  p: number;
  p_err: number;
  p_debiased: number;
  theta_deg: number;
  theta_err_deg: number;
  /** Galactic reference, IAU convention */
  q_gal: number;
  u_gal: number;
  q_gal_err: number;
  u_gal_err: number;
  theta_gal_deg: number;
  parallax_mas: number | null;
  parallax_err_mas: number | null;
  distance_pc: number | null;
  distance_lo_pc: number | null;
  distance_hi_pc: number | null;
  distance_method: string | null;
  ebv: number | null;
  flags: string[];
}

const round = (x: number, digits = 10) => Number(x.toPrecision(digits));

/**
 * Derive a measurement: ICRS and Galactic positions, Stokes and p, θ in both frames, debiased p
 * (MAS, Plaszczynski et al. 2014), σθ, distance (inverse corrected parallax or EDSD mode) and
 * the order-15 HEALPix index. `fallbackParallax` is the matched star's catalog parallax.
 */
export function deriveMeasurement(row: CanonicalRow, fallbackParallax?: { parallaxMas: number; parallaxErrMas: number } | null): { derived: Derived; warnings: Omit<RowIssue, 'column'>[] } {
  const warnings: Omit<RowIssue, 'column'>[] = [];
  let ra: number, dec: number, l: number, b: number;
  if (row.ra_deg !== undefined && row.dec_deg !== undefined) {
    ra = row.ra_deg;
    dec = row.dec_deg;
    ({ lDeg: l, bDeg: b } = icrsToGalactic(ra, dec));
  } else {
    l = row.glon_deg!;
    b = row.glat_deg!;
    ({ raDeg: ra, decDeg: dec } = galacticToIcrs(l, b));
  }

  // Stokes in the frame given
  let s = row.q !== undefined
    ? { q: row.q, u: row.u!, qErr: row.q_err!, uErr: row.u_err! }
    : stokesFromFractionAngle(row.p!, row.p_err!, row.theta_deg!, row.theta_err_deg!);
  const galactic = row.angle_frame === 'galactic';
  const eq = galactic ? rotateStokesToEquatorial(s.q, s.u, s.qErr, s.uErr, ra, dec) : s;
  const gal = galactic ? s : rotateStokesToGalactic(s.q, s.u, s.qErr, s.uErr, ra, dec);
  s = eq;
  const fa = propagateStokesErrors(eq.q, eq.u, eq.qErr, eq.uErr);
  const sigma = Math.sqrt((eq.qErr * eq.qErr + eq.uErr * eq.uErr) / 2);
  const flags: string[] = [];
  if (angleIsNonGaussian(fa.p, fa.pErr)) {
    flags.push('low_p_snr');
    warnings.push({ field: row.q !== undefined ? 'q' : 'p', message: `p/σp = ${(fa.p / fa.pErr).toFixed(2)} is below 5: the angle distribution is not Gaussian (Naghizadeh-Khouei & Clarke 1993)` });
  }

  // distance
  let plx = row.parallax_mas ?? null;
  let plxErr = row.parallax_err_mas ?? null;
  let dist: ReturnType<typeof distanceFromParallax> | null = null;
  if (row.distance_pc !== undefined) {
    dist = distanceFromDistance(row.distance_pc, row.distance_err_pc ?? 0);
  } else {
    if (plx === null && fallbackParallax) {
      plx = fallbackParallax.parallaxMas;
      plxErr = fallbackParallax.parallaxErrMas;
    }
    if (plx !== null && plxErr !== null) {
      dist = distanceFromParallax(plx, plxErr);
      const snr = correctParallax(plx) / plxErr;
      if (snr < INVERSE_PARALLAX_MIN_SNR) {
        flags.push('low_parallax_snr');
        warnings.push({ field: 'parallax_mas', message: `parallax S/N = ${snr.toFixed(2)} is below 5: distance is the EDSD posterior mode (L = 1.35 kpc), not 1/parallax` });
      }
    } else {
      flags.push('no_distance');
      warnings.push({ field: 'parallax_mas', message: 'no parallax or distance for this star: it cannot enter tomography until one is known' });
    }
  }
  if (row.ebv !== undefined && row.ebv > 0 && exceedsPolarizationEfficiency(fa.p, row.ebv)) {
    flags.push('above_efficiency_envelope');
    warnings.push({ field: 'ebv', message: `p/E(B−V) = ${((fa.p * 100) / row.ebv).toFixed(1)} %/mag is above the 9 %/mag envelope (Serkowski et al. 1975): intrinsic polarization or a bad value?` });
  }

  return {
    derived: {
      ra_deg: round(ra, 12),
      dec_deg: round(dec, 12),
      glon_deg: round(l, 12),
      glat_deg: round(b, 12),
      hpx15: ang2pixNest(INDEX_NSIDE, ra, dec),
      band: row.band,
      instrument: row.instrument,
      mjd: row.mjd ?? null,
      q: eq.q,
      u: eq.u,
      q_err: eq.qErr,
      u_err: eq.uErr,
      p: fa.p,
      p_err: fa.pErr,
      p_debiased: debiasedFractionMAS(fa.p, sigma),
      theta_deg: fa.thetaDeg,
      theta_err_deg: fa.thetaErrDeg,
      q_gal: gal.q,
      u_gal: gal.u,
      q_gal_err: gal.qErr,
      u_gal_err: gal.uErr,
      theta_gal_deg: polarizationAngleDeg(gal.q, gal.u),
      parallax_mas: plx,
      parallax_err_mas: plxErr,
      distance_pc: dist ? dist.distancePc : null,
      distance_lo_pc: dist ? dist.distanceLoPc : null,
      distance_hi_pc: dist ? dist.distanceHiPc : null,
      distance_method: dist ? dist.method : null,
      ebv: row.ebv ?? null,
      flags,
    },
    warnings,
  };
}

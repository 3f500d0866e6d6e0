/**
 * Polarization fraction, angle and their uncertainties from normalised Stokes q = Q/I, u = U/I
 * (fractions, not percent). Angles follow the IAU convention (IAU 1973, Trans. IAU XVB):
 * measured from the frame's north towards the east, in degrees in [0, 180).
 *
 * Starlight polarization is parallel to the plane-of-sky magnetic field; thermal dust emission
 * polarization is perpendicular to it (field angle = emission angle + 90°) — common practice.
 */

const RAD_TO_DEG = 180 / Math.PI;
const DEG_TO_RAD = Math.PI / 180;

/** S/N below which the angle distribution is not Gaussian (Naghizadeh-Khouei & Clarke 1993, A&A 274, 968). */
export const GAUSSIAN_ANGLE_MIN_SNR = 5;

/** p = sqrt(q² + u²) (biased upwards at low S/N; see debias.ts). */
export function polarizationFraction(q: number, u: number): number {
  return Math.hypot(q, u);
}

/** θ = ½·atan2(u, q), in degrees, wrapped to [0, 180). */
export function polarizationAngleDeg(q: number, u: number): number {
  const deg = 0.5 * Math.atan2(u, q) * RAD_TO_DEG;
  const wrapped = ((deg % 180) + 180) % 180;
  return wrapped === 180 ? 0 : wrapped;
}

export interface FractionAngle {
  p: number;
  pErr: number;
  thetaDeg: number;
  thetaErrDeg: number;
}

/**
 * Linear error propagation from (q, u, σq, σu) to (p, θ):
 *   σp² = (q²σq² + u²σu²)/p²,   σθ = ½·sqrt(u²σq² + q²σu²)/p²  rad.
 * With σq = σu = σ this gives σp = σ and σθ = σ/(2p) rad = 28.65°·σ/p (Serkowski 1962,
 * Adv. Astron. Astrophys. 1, 289). σθ is capped at 90° (no information about the angle);
 * at p = 0 the angle is undefined: pErr falls back to sqrt((σq² + σu²)/2) and σθ is 90°.
 * Linear propagation is poor below p/σ ≈ 5 (see angleIsNonGaussian).
 */
export function propagateStokesErrors(q: number, u: number, qErr: number, uErr: number): FractionAngle {
  const p = polarizationFraction(q, u);
  const thetaDeg = polarizationAngleDeg(q, u);
  if (p === 0) {
    return { p, pErr: Math.sqrt((qErr * qErr + uErr * uErr) / 2), thetaDeg, thetaErrDeg: 90 };
  }
  const p2 = p * p;
  const pErr = Math.sqrt((q * q * qErr * qErr + u * u * uErr * uErr) / p2);
  const thetaErrRad = (0.5 * Math.sqrt(u * u * qErr * qErr + q * q * uErr * uErr)) / p2;
  return { p, pErr, thetaDeg, thetaErrDeg: Math.min(90, thetaErrRad * RAD_TO_DEG) };
}

export interface StokesWithErrors {
  q: number;
  u: number;
  qErr: number;
  uErr: number;
}

/**
 * From (p, θ) to (q, u): q = p cos 2θ, u = p sin 2θ, errors through the Jacobian assuming
 * p and θ uncorrelated:
 *   σq² = cos²2θ·σp² + (2p sin 2θ)²·σθ²,   σu² = sin²2θ·σp² + (2p cos 2θ)²·σθ²   (σθ in rad).
 * (Note: the q–u covariance this implies is dropped; callers that need it should keep p, θ.)
 */
export function stokesFromFractionAngle(
  p: number,
  pErr: number,
  thetaDeg: number,
  thetaErrDeg: number,
): StokesWithErrors {
  const twoTheta = 2 * thetaDeg * DEG_TO_RAD;
  const c = Math.cos(twoTheta);
  const s = Math.sin(twoTheta);
  const sigmaTheta = thetaErrDeg * DEG_TO_RAD;
  const q = p * c;
  const u = p * s;
  const qErr = Math.sqrt(c * c * pErr * pErr + 4 * p * p * s * s * sigmaTheta * sigmaTheta);
  const uErr = Math.sqrt(s * s * pErr * pErr + 4 * p * p * c * c * sigmaTheta * sigmaTheta);
  return { q, u, qErr, uErr };
}

/**
 * True when p/σp < 5: the angle distribution is then not Gaussian and σθ from linear
 * propagation is unreliable (Naghizadeh-Khouei & Clarke 1993, A&A 274, 968).
 */
export function angleIsNonGaussian(p: number, pErr: number): boolean {
  if (!(pErr > 0)) return false;
  return p / pErr < GAUSSIAN_ANGLE_MIN_SNR;
}

/**
 * ICRS ↔ Galactic coordinates and the rotation of polarization angles and Stokes parameters
 * between the two frames.
 *
 * Galactic frame as defined with the Hipparcos catalogue (ESA 1997, The Hipparcos and Tycho
 * Catalogues, vol. 1 §1.5.3): north Galactic pole at α = 192.85948°, δ = +27.12825° (ICRS) and
 * the north celestial pole at Galactic longitude 122.93192° (ascending node l_Ω = 32.93192°).
 * The rotation is applied directly to ICRS directions (as the astrometric catalogs do).
 * astropy 5.2 instead applies the same angles to FK5 J2000 after the ICRS → FK5 frame bias,
 * so its (l, b) differ from these by up to ~7e-6° (25 mas); see the tests.
 *
 * Polarization angles follow the IAU convention (from north towards east) in both frames.
 */

const DEG = Math.PI / 180;
const RAD_TO_DEG = 180 / Math.PI;

/** Hipparcos definition of the Galactic frame (ESA 1997 vol. 1 §1.5.3). */
export const NGP_RA_DEG = 192.85948;
export const NGP_DEC_DEG = 27.12825;
export const NCP_GALACTIC_LON_DEG = 122.93192;

type Mat3 = [number, number, number, number, number, number, number, number, number];

function rotZ(deg: number): Mat3 {
  const c = Math.cos(deg * DEG);
  const s = Math.sin(deg * DEG);
  return [c, s, 0, -s, c, 0, 0, 0, 1];
}

function rotY(deg: number): Mat3 {
  const c = Math.cos(deg * DEG);
  const s = Math.sin(deg * DEG);
  return [c, 0, -s, 0, 1, 0, s, 0, c];
}

function mul(a: Mat3, b: Mat3): Mat3 {
  const r = new Array(9).fill(0) as Mat3;
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j < 3; j++) {
      r[3 * i + j] = a[3 * i] * b[j] + a[3 * i + 1] * b[3 + j] + a[3 * i + 2] * b[6 + j];
    }
  }
  return r;
}

/**
 * Rotation r_gal = M · r_eq (row-major) for a Galactic frame whose north pole is at
 * (α_p, δ_p) and in which the equatorial north pole has longitude l_NCP:
 *   M = R_z(180° − l_NCP) · R_y(90° − δ_p) · R_z(α_p)   (passive, axis rotations).
 * Rows are the Galactic x, y, z axes in equatorial coordinates; row 3 is the pole.
 */
export function galacticRotationMatrix(ngpRaDeg: number, ngpDecDeg: number, ncpLonDeg: number): number[] {
  return mul(mul(rotZ(180 - ncpLonDeg), rotY(90 - ngpDecDeg)), rotZ(ngpRaDeg));
}

/** ICRS → Galactic rotation of the Hipparcos definition (ESA 1997 vol. 1 §1.5.3). */
export const ICRS_TO_GALACTIC: readonly number[] = Object.freeze(
  galacticRotationMatrix(NGP_RA_DEG, NGP_DEC_DEG, NCP_GALACTIC_LON_DEG),
);

/** Apply a row-major 3×3 rotation to the direction (lon, lat) in degrees; lon in [0, 360). */
export function rotateLonLatDeg(m: readonly number[], lonDeg: number, latDeg: number): { lonDeg: number; latDeg: number } {
  const [x, y, z] = unitVector(lonDeg, latDeg);
  const { lon, lat } = toLonLat(
    m[0] * x + m[1] * y + m[2] * z,
    m[3] * x + m[4] * y + m[5] * z,
    m[6] * x + m[7] * y + m[8] * z,
  );
  return { lonDeg: lon, latDeg: lat };
}

/** Transpose (= inverse) of a row-major 3×3 rotation. */
export function transposeMatrix(m: readonly number[]): number[] {
  return [m[0], m[3], m[6], m[1], m[4], m[7], m[2], m[5], m[8]];
}

function unitVector(lonDeg: number, latDeg: number): [number, number, number] {
  const cl = Math.cos(latDeg * DEG);
  return [cl * Math.cos(lonDeg * DEG), cl * Math.sin(lonDeg * DEG), Math.sin(latDeg * DEG)];
}

function toLonLat(x: number, y: number, z: number): { lon: number; lat: number } {
  let lon = Math.atan2(y, x) * RAD_TO_DEG;
  if (lon < 0) lon += 360;
  if (lon >= 360) lon -= 360;
  // atan2 form keeps latitude accurate near the poles, where asin(z) loses digits.
  const lat = Math.atan2(z, Math.hypot(x, y)) * RAD_TO_DEG;
  return { lon, lat };
}

const GALACTIC_TO_ICRS: readonly number[] = Object.freeze(transposeMatrix(ICRS_TO_GALACTIC));

/** ICRS (α, δ) in degrees → Galactic (l in [0, 360), b) in degrees. */
export function icrsToGalactic(raDeg: number, decDeg: number): { lDeg: number; bDeg: number } {
  const { lonDeg, latDeg } = rotateLonLatDeg(ICRS_TO_GALACTIC, raDeg, decDeg);
  return { lDeg: lonDeg, bDeg: latDeg };
}

/** Galactic (l, b) in degrees → ICRS (α in [0, 360), δ) in degrees. */
export function galacticToIcrs(lDeg: number, bDeg: number): { raDeg: number; decDeg: number } {
  const { lonDeg, latDeg } = rotateLonLatDeg(GALACTIC_TO_ICRS, lDeg, bDeg);
  return { raDeg: lonDeg, decDeg: latDeg };
}

/**
 * Position angle ψ (degrees east of north, in [0, 360)) of the great circle from the star to
 * the north Galactic pole (α_p, δ_p):
 *   ψ = atan2( sin(α_p − α)·cos δ_p,  cos δ·sin δ_p − sin δ·cos δ_p·cos(α_p − α) )
 * (spherical trigonometry, common practice), evaluated as atan2 of the pole direction's
 * components along the star's local east and north. Undefined exactly at the pole (returns 0).
 */
export function galacticPolePositionAngleDeg(raDeg: number, decDeg: number): number {
  const m = ICRS_TO_GALACTIC;
  // Pole direction from the rotation itself (third row), so frames and angles agree exactly.
  const px = m[6];
  const py = m[7];
  const pz = m[8];
  const a = raDeg * DEG;
  const d = decDeg * DEG;
  const ca = Math.cos(a);
  const sa = Math.sin(a);
  const cd = Math.cos(d);
  const sd = Math.sin(d);
  // Local east and north unit vectors at the star.
  const east = -sa * px + ca * py;
  const north = -sd * ca * px - sd * sa * py + cd * pz;
  let psi = Math.atan2(east, north) * RAD_TO_DEG;
  if (psi < 0) psi += 360;
  return psi >= 360 ? psi - 360 : psi;
}

function wrap180(deg: number): number {
  const w = ((deg % 180) + 180) % 180;
  return w === 180 ? 0 : w;
}

/** θ_gal = θ_eq − ψ (mod 180°), with ψ from galacticPolePositionAngleDeg (METHODS.md). */
export function rotateAngleToGalactic(thetaEqDeg: number, raDeg: number, decDeg: number): number {
  return wrap180(thetaEqDeg - galacticPolePositionAngleDeg(raDeg, decDeg));
}

/** θ_eq = θ_gal + ψ (mod 180°); the position is given in ICRS. */
export function rotateAngleToEquatorial(thetaGalDeg: number, raDeg: number, decDeg: number): number {
  return wrap180(thetaGalDeg + galacticPolePositionAngleDeg(raDeg, decDeg));
}

export interface Stokes {
  q: number;
  u: number;
  qErr: number;
  uErr: number;
}

/**
 * Stokes rotation by an angle ψ of the reference direction:
 *   q' = q cos 2ψ + u sin 2ψ,   u' = −q sin 2ψ + u cos 2ψ.
 * Errors, assuming q and u uncorrelated on input:
 *   σq'² = cos²2ψ σq² + sin²2ψ σu²,   σu'² = sin²2ψ σq² + cos²2ψ σu²
 * (the induced q'–u' covariance, zero when σq = σu, is dropped).
 */
function rotateStokes(s: Stokes, psiDeg: number): Stokes {
  const c = Math.cos(2 * psiDeg * DEG);
  const n = Math.sin(2 * psiDeg * DEG);
  const q2 = s.qErr * s.qErr;
  const u2 = s.uErr * s.uErr;
  return {
    q: s.q * c + s.u * n,
    u: -s.q * n + s.u * c,
    qErr: Math.sqrt(c * c * q2 + n * n * u2),
    uErr: Math.sqrt(n * n * q2 + c * c * u2),
  };
}

/** Equatorial (IAU) Stokes → Galactic (IAU) Stokes at ICRS position (α, δ): rotation by ψ. */
export function rotateStokesToGalactic(q: number, u: number, qErr: number, uErr: number, raDeg: number, decDeg: number): Stokes {
  return rotateStokes({ q, u, qErr, uErr }, galacticPolePositionAngleDeg(raDeg, decDeg));
}

/** Galactic (IAU) Stokes → equatorial (IAU) Stokes at ICRS position (α, δ): rotation by −ψ. */
export function rotateStokesToEquatorial(q: number, u: number, qErr: number, uErr: number, raDeg: number, decDeg: number): Stokes {
  return rotateStokes({ q, u, qErr, uErr }, -galacticPolePositionAngleDeg(raDeg, decDeg));
}

/**
 * IAU → COSMO convention for HEALPix Stokes maps: U_COSMO = −U_IAU (q unchanged). The map
 * or file must state which convention it holds; the transformation is its own inverse.
 */
export function stokesToCosmo(q: number, u: number): { q: number; u: number } {
  return { q, u: -u };
}

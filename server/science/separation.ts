/**
 * Angular separation on the sphere by the Vincenty formula (special case of Vincenty 1975 for a
 * sphere; common practice, also what astropy uses):
 *   Δσ = atan2( sqrt((cos δ2 sin Δα)² + (cos δ1 sin δ2 − sin δ1 cos δ2 cos Δα)²),
 *               sin δ1 sin δ2 + cos δ1 cos δ2 cos Δα )
 * Accurate at all separations, including sub-arcsecond ones and antipodes.
 */
export function angularSeparationDeg(ra1Deg: number, dec1Deg: number, ra2Deg: number, dec2Deg: number): number {
  const d = Math.PI / 180;
  const dra = (ra2Deg - ra1Deg) * d;
  const s1 = Math.sin(dec1Deg * d);
  const c1 = Math.cos(dec1Deg * d);
  const s2 = Math.sin(dec2Deg * d);
  const c2 = Math.cos(dec2Deg * d);
  const sdra = Math.sin(dra);
  const cdra = Math.cos(dra);
  const num1 = c2 * sdra;
  const num2 = c1 * s2 - s1 * c2 * cdra;
  const den = s1 * s2 + c1 * c2 * cdra;
  return Math.atan2(Math.hypot(num1, num2), den) / d;
}

/**
 * Position angle (degrees east of north, in [0, 360)) at point 1 of the great circle towards
 * point 2 (spherical trigonometry, common practice; same as astropy's position_angle):
 *   PA = atan2( sin Δα · cos δ2,  cos δ1 sin δ2 − sin δ1 cos δ2 cos Δα ).
 */
export function positionAngleDeg(ra1Deg: number, dec1Deg: number, ra2Deg: number, dec2Deg: number): number {
  const d = Math.PI / 180;
  const dra = (ra2Deg - ra1Deg) * d;
  const c2 = Math.cos(dec2Deg * d);
  const y = Math.sin(dra) * c2;
  const x = Math.cos(dec1Deg * d) * Math.sin(dec2Deg * d) - Math.sin(dec1Deg * d) * c2 * Math.cos(dra);
  let pa = Math.atan2(y, x) / d;
  if (pa < 0) pa += 360;
  return pa >= 360 ? pa - 360 : pa;
}

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

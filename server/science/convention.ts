/**
 * Polarization conventions of Stokes U and of angles.
 *
 * IAU (IAU 1973 resolution, Trans. IAU XVB): θ is measured from the frame's north through east,
 * and θ = ½·atan2(u, q). This is what Starveil stores and answers by default.
 * COSMO (used by some HEALPix/CMB map makers, METHODS.md): U_COSMO = −U_IAU, Q unchanged.
 *
 * Consequences, derived from θ = ½·atan2(u, q):
 *   u → −u                     every U-like quantity (u, ū, ΔU) flips sign; errors do not change;
 *   θ_COSMO = ½·atan2(−u, q) = −θ_IAU ≡ (180° − θ_IAU) mod 180°   (the angle now runs north
 *                              through west);
 *   Δθ_COSMO = θ_COSMO,to − θ_COSMO,from = −Δθ_IAU, wrapped back to (−90°, 90°] (so +90° stays +90°);
 *   p, σp, σθ, |Δθ| and a jump's significance are unchanged.
 * Each map is its own inverse: applying it twice gives the IAU values back.
 */

export type StokesConvention = 'iau' | 'cosmo';
export const STOKES_CONVENTIONS: readonly StokesConvention[] = ['iau', 'cosmo'];

/** U (or u, ū, ΔU) in the requested convention, from the IAU value. */
export function uInConvention(uIau: number, convention: StokesConvention): number {
  return convention === 'cosmo' ? -uIau : uIau;
}

/** A polarization angle in [0, 180) in the requested convention, from the IAU angle. */
export function angleInConvention(thetaIauDeg: number, convention: StokesConvention): number {
  if (convention === 'iau') return thetaIauDeg;
  const r = (((180 - thetaIauDeg) % 180) + 180) % 180;
  return r === 180 ? 0 : r;
}

/** An angle jump in (−90, 90] in the requested convention, from the IAU jump. */
export function jumpInConvention(deltaIauDeg: number, convention: StokesConvention): number {
  if (convention === 'iau') return deltaIauDeg;
  const r = -deltaIauDeg;
  if (r === -90) return 90;
  return r === 0 ? 0 : r; // no −0 in the output
}

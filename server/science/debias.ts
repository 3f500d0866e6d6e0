/**
 * Debiasing the polarization fraction. p = sqrt(q² + u²) is positively biased at low S/N
 * (Rice distribution). Never debias q and u: they are unbiased.
 */

/**
 * Modified asymptotic estimator (Plaszczynski et al. 2014, MNRAS 439, 4048), isotropic case b = σ:
 *   p_MAS = p − σ²·(1 − exp(−p²/σ²)) / (2p).
 * Tends to p − σ²/(2p) at high S/N and to 0 as p → 0 (limit p/2·… → 0; returns 0 at p = 0).
 * With σ = 0 there is no bias and p is returned.
 */
export function debiasedFractionMAS(p: number, sigma: number): number {
  if (p <= 0) return 0;
  if (!(sigma > 0)) return p;
  const x = (p * p) / (sigma * sigma);
  // −expm1(−x) = 1 − exp(−x), accurate for small x.
  return p - (sigma * sigma * -Math.expm1(-x)) / (2 * p);
}

/**
 * Wardle & Kronberg (1974, ApJ 194, 249) estimator: sqrt(p² − σ²) when p ≥ σ, else 0.
 */
export function debiasedFractionWardleKronberg(p: number, sigma: number): number {
  if (!(p > sigma)) return 0;
  return Math.sqrt(p * p - sigma * sigma);
}

/**
 * Seeded synthetic sightlines with survey-like parallaxes (METHODS.md, "Tomography with
 * survey-like parallaxes"), for bench/recovery.ts and the recovery tests. Independent of
 * synthesize.ts and of the test fields: its own star counts, distance law, error mix and clouds.
 *
 * Truth: 1–3 thin screens at distances d_k, each adding p_k (cos 2θ_k, sin 2θ_k) to every star
 * behind it, plus, per star and per screen, an intrinsic scatter N(0, s_k²) in q and u
 * (turbulence inside the cloud; s_k = 0–30 % of p_k). Measured q, u add N(0, σ²) with σ from
 * 0.05 to 0.3 % (per star).
 * Stars: 30–300 per cell, true distances half uniform in distance and half uniform in volume
 * between 40 pc and 3 kpc (a cell sees both the near disk and many far stars).
 * Parallaxes: ϖ_true = 1000/r; errors "as a survey gets them": 85 % of stars with a fractional
 * error σϖ/ϖ log-uniform in 1–20 %, 15 % with ϖ/σϖ uniform in 1.5–5; observed
 * ϖ = ϖ_true + N(0, σϖ²) − 0.017 mas (the catalog's global zero point, Lindegren et al. 2021).
 * The catalogue distance is made the way Starveil makes it (distanceFromParallax: zero point,
 * inverse parallax for ϖ/σϖ ≥ 5, else the EDSD posterior mode).
 * `goodParallaxes` switches every star to 1–5 % errors (the regime of the earlier tests).
 */

import { mulberry32, hashSeed, gaussian } from '../random';
import { distanceFromParallax } from '../distance';
import type { TomographyStar } from './types';

export interface SurveyCloud {
  distancePc: number;
  p: number;
  thetaDeg: number;
  /** intrinsic scatter per Stokes component behind this screen (fraction) */
  scatter: number;
}

export interface SurveyField {
  stars: TomographyStar[];
  trueDistancePc: number[];
  clouds: SurveyCloud[];
  /** every cloud: ≥ 6 stars in front (since the previous cloud), ≥ 8 behind (to the next), step ≥ 5σ, clouds ≥ 25 % apart */
  resolvable: boolean;
  /** per cloud: stars in front, behind, and the step's significance */
  cloudStats: { inFront: number; behind: number; stepSigma: number }[];
}

export interface SurveyFieldOptions {
  nClouds: 1 | 2 | 3;
  seed: number | string;
  /** stars in the cell (default drawn 30–300) */
  nStars?: number;
  /** all parallaxes at 1–5 % errors */
  goodParallaxes?: boolean;
  /** share of stars at ϖ/σϖ 1.5–5 (default 0.15) */
  lowSnrShare?: number;
}

export const CATALOG_ZERO_POINT_MAS = -0.017;

function logUniform(rng: () => number, lo: number, hi: number): number {
  return lo * Math.exp(rng() * Math.log(hi / lo));
}

export function surveyField(o: SurveyFieldOptions): SurveyField {
  const rng = mulberry32(hashSeed('survey-field', o.nClouds, o.seed, o.goodParallaxes ? 'good' : 'survey'));
  const n = o.nStars ?? 30 + Math.floor(rng() * 271);
  const lowShare = o.lowSnrShare ?? 0.15;
  // Clouds: the first at 100–1200 pc, each next 1.15–2.5 times farther (some closer than 25 %:
  // the marginal cases); p 0.4–3 %, angles uniform.
  const clouds: SurveyCloud[] = [];
  let d = 100 + 1100 * rng();
  for (let k = 0; k < o.nClouds; k++) {
    if (k > 0) d *= 1.15 + 1.35 * rng();
    const p = 0.004 + 0.026 * rng();
    clouds.push({ distancePc: d, p, thetaDeg: 180 * rng(), scatter: p * 0.3 * rng() });
  }
  const trueDist: number[] = [];
  const stars: TomographyStar[] = [];
  let tries = 0;
  while (stars.length < n && tries < 20 * n) {
    tries++;
    const rMin = 40, rMax = 3000;
    const r = rng() < 0.5 ? rMin + (rMax - rMin) * rng() : Math.cbrt(rMin ** 3 + (rMax ** 3 - rMin ** 3) * rng());
    const plxTrue = 1000 / r;
    let sigmaPlx: number;
    if (o.goodParallaxes) sigmaPlx = plxTrue * (0.01 + 0.04 * rng());
    else if (rng() < lowShare) sigmaPlx = plxTrue / (1.5 + 3.5 * rng());
    else sigmaPlx = plxTrue * logUniform(rng, 0.01, 0.2);
    const plxObs = plxTrue + sigmaPlx * gaussian(rng) + CATALOG_ZERO_POINT_MAS;
    let q = 0, u = 0;
    for (const c of clouds) {
      if (r <= c.distancePc) continue;
      q += c.p * Math.cos((2 * c.thetaDeg * Math.PI) / 180) + c.scatter * gaussian(rng);
      u += c.p * Math.sin((2 * c.thetaDeg * Math.PI) / 180) + c.scatter * gaussian(rng);
    }
    const err = 0.0005 + 0.0025 * rng();
    q += err * gaussian(rng);
    u += err * gaussian(rng);
    const dist = distanceFromParallax(plxObs, sigmaPlx);
    if (!(dist.distancePc > 0) || !Number.isFinite(dist.distanceHiPc)) continue;
    trueDist.push(r);
    stars.push({
      id: `s${String(stars.length).padStart(4, '0')}`,
      distancePc: dist.distancePc, distanceLoPc: dist.distanceLoPc, distanceHiPc: dist.distanceHiPc,
      parallaxMas: plxObs, parallaxErrMas: sigmaPlx,
      q, u, qErr: err, uErr: err,
    });
  }
  const cloudStats = clouds.map((c, k) => {
    const lo = k > 0 ? clouds[k - 1].distancePc : 0;
    const hi = k + 1 < clouds.length ? clouds[k + 1].distancePc : Infinity;
    let nf = 0, nb = 0, vf = 0, vb = 0;
    trueDist.forEach((r, i) => {
      const e2 = stars[i].qErr ** 2;
      if (r > lo && r <= c.distancePc) { nf++; vf += e2 + (k > 0 ? clouds[k - 1].scatter ** 2 : 0); }
      else if (r > c.distancePc && r <= hi) { nb++; vb += e2 + c.scatter ** 2; }
    });
    // σ of each side's mean per component, from the mean variance of its stars
    const sf = nf > 0 ? Math.sqrt(vf / nf / nf) : Infinity;
    const sb = nb > 0 ? Math.sqrt(vb / nb / nb) : Infinity;
    return { inFront: nf, behind: nb, stepSigma: c.p / Math.hypot(sf, sb) };
  });
  const apart = clouds.every((c, k) => k === 0 || c.distancePc >= 1.25 * clouds[k - 1].distancePc);
  const resolvable = apart && cloudStats.every((s) => s.inFront >= 6 && s.behind >= 8 && s.stepSigma >= 5);
  return { stars, trueDistancePc: trueDist, clouds, resolvable, cloudStats };
}

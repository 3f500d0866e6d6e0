/**
 * Distance posterior samplers for the Monte Carlo of the tomography fit.
 *
 * Priority: (1) parallax and its error → the EDSD posterior of ../distance.ts (the same
 * posterior the catalogue distances come from, METHODS.md "Distances"); (2) distanceErrPc →
 * N(distancePc, distanceErrPc²) truncated to r > 0; (3) otherwise a split normal with
 * σ− = distancePc − distanceLoPc below and σ+ = distanceHiPc − distancePc above the catalogue
 * distance, truncated to r > 0 (its 16/84 % points sit close to, not exactly at, lo and hi: an
 * approximation when nothing better is stored); (4) a star with no spread is fixed.
 */

import { gaussian } from '../random';
import { makeDistanceSampler } from '../distance';
import type { TomographyStar } from './types';

export type DistanceSampler = (rng: () => number) => number;

const MAX_TRUNCATION_TRIES = 64;

export function makeStarDistanceSampler(star: TomographyStar): DistanceSampler {
  const { parallaxMas, parallaxErrMas, distanceErrPc, distancePc } = star;
  if (parallaxMas !== undefined && parallaxErrMas !== undefined && Number.isFinite(parallaxMas) && parallaxErrMas > 0) {
    return makeDistanceSampler(parallaxMas, parallaxErrMas);
  }
  if (distanceErrPc !== undefined && distanceErrPc > 0) {
    return (rng) => {
      for (let i = 0; i < MAX_TRUNCATION_TRIES; i++) {
        const r = distancePc + distanceErrPc * gaussian(rng);
        if (r > 0) return r;
      }
      return distancePc;
    };
  }
  const sLo = Math.max(0, distancePc - star.distanceLoPc);
  const sHi = Math.max(0, star.distanceHiPc - distancePc);
  if (sLo === 0 && sHi === 0) return () => distancePc;
  const pLow = sLo / (sLo + sHi);
  return (rng) => {
    for (let i = 0; i < MAX_TRUNCATION_TRIES; i++) {
      const below = rng() < pLow;
      const z = Math.abs(gaussian(rng));
      const r = below ? distancePc - sLo * z : distancePc + sHi * z;
      if (r > 0) return r;
    }
    return distancePc;
  };
}

/** 1σ-equivalent half width of a star's 16–84 % distance interval, pc. */
export function distanceSigmaPc(star: TomographyStar): number {
  if (star.distanceErrPc !== undefined && star.distanceErrPc > 0 && !(star.distanceHiPc > star.distanceLoPc)) {
    return star.distanceErrPc;
  }
  return Math.max(0, (star.distanceHiPc - star.distanceLoPc) / 2);
}

/**
 * Synthetic sightlines for tests, seeds and benchmarks: thin screens (clouds) at given
 * distances, each adding its (q, u) to every star behind it (optically thin regime, METHODS.md
 * "Tomography" 2), with optional intrinsic scatter per cloud and Gaussian measurement errors.
 *
 * Placement: 'uniform' (default) puts true distances uniformly in [minDistancePc, maxDistancePc]
 * — roughly what a magnitude-limited sample through dust looks like over a limited range, and it
 * keeps stars in front of near clouds; 'cone' is uniform in the volume of a cone (density ∝ r²).
 * Parallaxes: true ϖ = 1000/r mas, error σϖ = f·ϖ with f uniform in parallaxFracErr (default
 * 1–5 %), catalogue value ϖ_true + σϖ·z + zero point (−0.017 mas, as a catalogue would carry it);
 * catalogue distances then come from ../distance.ts (inverse parallax at these S/N).
 */

import { mulberry32, gaussian, hashSeed } from '../random';
import { distanceFromParallax, PARALLAX_ZERO_POINT_MAS } from '../distance';
import type { TomographyStar } from './types';

export type SyntheticCloudSpec =
  | { distancePc: number; q: number; u: number }
  | { distancePc: number; p: number; thetaDeg: number };

export interface SyntheticCloud {
  distancePc: number;
  q: number;
  u: number;
  p: number;
  thetaDeg: number;
}

export interface SynthesizeOptions {
  clouds: SyntheticCloudSpec[];
  nStars: number;
  maxDistancePc: number;
  /** Default maxDistancePc / 50. */
  minDistancePc?: number;
  /** Fractional parallax error, a value or a [min, max] range drawn uniformly. Default [0.01, 0.05]. */
  parallaxFracErr?: number | [number, number];
  /** σq = σu per star, a value or a [min, max] range drawn log-uniformly. Default [0.001, 0.003]. */
  stokesErr?: number | [number, number];
  /** Intrinsic scatter each cloud adds to q and u of every star behind it. Default 0. */
  scatter?: number;
  placement?: 'uniform' | 'cone';
  seed?: number | string;
  idPrefix?: string;
}

export interface SyntheticField {
  stars: TomographyStar[];
  /** True distance of each star, same order as stars. */
  trueDistancesPc: number[];
  /** Clouds sorted by distance, with both (q, u) and (p, θ). */
  clouds: SyntheticCloud[];
}

export function cloudFromSpec(c: SyntheticCloudSpec): SyntheticCloud {
  if ('p' in c) {
    const t = (2 * c.thetaDeg * Math.PI) / 180;
    return { distancePc: c.distancePc, q: c.p * Math.cos(t), u: c.p * Math.sin(t), p: c.p, thetaDeg: c.thetaDeg };
  }
  const theta = ((0.5 * Math.atan2(c.u, c.q) * 180) / Math.PI + 180) % 180;
  return { distancePc: c.distancePc, q: c.q, u: c.u, p: Math.hypot(c.q, c.u), thetaDeg: theta };
}

function pick(rng: () => number, v: number | [number, number], logUniform: boolean): number {
  if (typeof v === 'number') return v;
  const [lo, hi] = v;
  if (logUniform && lo > 0) return lo * Math.exp(rng() * Math.log(hi / lo));
  return lo + rng() * (hi - lo);
}

export function synthesizeField(o: SynthesizeOptions): SyntheticField {
  if (!(o.nStars >= 0) || !Number.isInteger(o.nStars)) throw new RangeError(`nStars = ${o.nStars}: expected an integer ≥ 0`);
  if (!(o.maxDistancePc > 0)) throw new RangeError(`maxDistancePc = ${o.maxDistancePc}: expected a number > 0`);
  const rng = mulberry32(hashSeed('synthesize-field', o.seed ?? 0));
  const clouds = o.clouds.map(cloudFromSpec).sort((a, b) => a.distancePc - b.distancePc);
  const dMin = o.minDistancePc ?? o.maxDistancePc / 50;
  const dMax = o.maxDistancePc;
  const fracErr = o.parallaxFracErr ?? [0.01, 0.05];
  const stokesErr = o.stokesErr ?? [0.001, 0.003];
  const scatter = o.scatter ?? 0;
  const prefix = o.idPrefix ?? 's';
  const stars: TomographyStar[] = [];
  const trueDistancesPc: number[] = [];
  for (let i = 0; i < o.nStars; i++) {
    const r = o.placement === 'cone'
      ? Math.cbrt(dMin ** 3 + rng() * (dMax ** 3 - dMin ** 3))
      : dMin + rng() * (dMax - dMin);
    const plxTrue = 1000 / r;
    const plxErr = pick(rng, fracErr, false) * plxTrue;
    const plx = plxTrue + plxErr * gaussian(rng) + PARALLAX_ZERO_POINT_MAS;
    const dist = distanceFromParallax(plx, plxErr);
    let q = 0, u = 0;
    for (const c of clouds) {
      if (c.distancePc >= r) break;
      q += c.q + (scatter > 0 ? scatter * gaussian(rng) : 0);
      u += c.u + (scatter > 0 ? scatter * gaussian(rng) : 0);
    }
    const sigma = pick(rng, stokesErr, true);
    stars.push({
      id: `${prefix}${i}`,
      distancePc: dist.distancePc,
      distanceLoPc: dist.distanceLoPc,
      distanceHiPc: dist.distanceHiPc,
      parallaxMas: plx,
      parallaxErrMas: plxErr,
      q: q + sigma * gaussian(rng),
      u: u + sigma * gaussian(rng),
      qErr: sigma,
      uErr: sigma,
    });
    trueDistancesPc.push(r);
  }
  return { stars, trueDistancesPc, clouds };
}

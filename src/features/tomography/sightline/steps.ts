/**
 * What the sightline plots draw, from one sightline answer (pure functions).
 *
 * The fit splits the distance-ordered stars into segments of constant mean (q̄, ū): the summed
 * Stokes parameters of every cloud in front (thin screens add, METHODS.md "Tomography" 2). Drawn
 * against distance that is a step function rising at each layer's break. When the nearest stars
 * are unpolarized (clearForeground) the first segment is that foreground and there is one more
 * segment than layers; otherwise segment k belongs to layer k, the first being a 'foreground'
 * layer nearer than every star.
 */
import { propagateStokesErrors, type FractionAngle, type StokesWithErrors } from '@science/polarization';
import type { Sightline, TomographyStar } from '../types';

/** q, u, σq, σu, p and σp in per cent; θ and σθ in degrees (linear propagation, @science/polarization). */
export type PercentStokes = StokesWithErrors & FractionAngle;

export interface Step extends PercentStokes {
  segment: number;
  /** the layer whose near edge starts this step; null for the unpolarized foreground */
  layer: number | null;
  fromPc: number;
  toPc: number;
}

export interface DistanceBand {
  layer: number;
  kind: 'break' | 'foreground';
  medianPc: number;
  /** 16th and 84th percentiles, clamped to the plot's range (a foreground layer reaches down to the left edge) */
  loPc: number;
  hiPc: number;
}

export interface StarPoint extends PercentStokes {
  id: string;
  distancePc: number;
  distanceLoPc: number;
  distanceHiPc: number;
  /** false: parallax too poor to place a break (drawn faint; it did not decide where a layer is) */
  placed: boolean;
}

const PCT = 100;

/** Stokes fractions with their errors as per cent, with p, σp, θ, σθ propagated from them. */
function percentStokes(q: number, u: number, qErr: number, uErr: number): PercentStokes {
  const f = propagateStokesErrors(q, u, qErr, uErr);
  return { q: PCT * q, u: PCT * u, qErr: PCT * qErr, uErr: PCT * uErr, p: PCT * f.p, pErr: PCT * f.pErr, thetaDeg: f.thetaDeg, thetaErrDeg: f.thetaErrDeg };
}

/** Stars with q, u (and p, σp) in per cent and θ, σθ in degrees by linear propagation. */
export function starPoints(stars: TomographyStar[], notPlaced: string[] = []): StarPoint[] {
  const skip = new Set(notPlaced);
  return stars.map((s) => ({
    id: s.id,
    distancePc: s.distancePc,
    distanceLoPc: s.distanceLoPc,
    distanceHiPc: s.distanceHiPc,
    ...percentStokes(s.q, s.u, s.qErr, s.uErr),
    placed: !skip.has(s.id),
  }));
}

/** Distance range of the plots [pc]: every star's 16–84 % range and every layer's, with a margin (log axis, so > 0). */
export function distanceDomain(s: Sightline): [number, number] {
  const lows = [...(s.stars ?? []).map((x) => x.distanceLoPc), ...s.layers.map((l) => l.distanceLoPc)].filter((v) => v > 0);
  const highs = [...(s.stars ?? []).map((x) => x.distanceHiPc), ...s.layers.map((l) => l.distanceHiPc)].filter((v) => v > 0);
  const lo = lows.length ? Math.min(...lows) : 10;
  const hi = highs.length ? Math.max(...highs) : 5000;
  return [lo / 1.25, hi * 1.15];
}

/** Segment means as steps: each from its layer's median break distance to the next one. */
export function segmentSteps(s: Sightline, domain: [number, number]): Step[] {
  const offset = s.clearForeground ? 1 : 0;
  const startOf = (seg: number) => {
    if (seg === 0) return domain[0];
    const layer = s.layers[seg - offset];
    return layer ? Math.max(domain[0], layer.distancePc) : domain[0];
  };
  return s.segments.map((g, i) => {
    const layer = i - offset;
    return {
      segment: i,
      layer: layer >= 0 ? layer : null,
      fromPc: startOf(i),
      toPc: i + 1 < s.segments.length ? startOf(i + 1) : domain[1],
      ...percentStokes(g.meanQ, g.meanU, g.meanQErr, g.meanUErr),
    };
  });
}

/** The step function as a polyline (horizontal runs joined by verticals at the breaks). */
export function stepLine(steps: Step[], key: 'q' | 'u'): { distancePc: number; value: number }[] {
  return steps.flatMap((st) => [
    { distancePc: st.fromPc, value: st[key] },
    { distancePc: st.toPc, value: st[key] },
  ]);
}

/** The 16–84 % distance range of every layer's near edge. */
export function layerBands(s: Sightline, domain: [number, number]): DistanceBand[] {
  return s.layers.map((l) => ({
    layer: l.index,
    kind: l.kind,
    medianPc: l.distancePc,
    // an upper bound reaches down to the left edge (runs before distanceBound: foreground layers)
    loPc: Math.max(domain[0], (l.distanceBound ?? (l.kind === 'foreground' ? 'upper' : 'range')) === 'upper' ? domain[0] : l.distanceLoPc),
    hiPc: Math.min(domain[1], Math.max(l.distanceHiPc, domain[0])),
  }));
}

/** Layer numbers as people count them: the nearest layer is 1. */
export const layerNumber = (index: number) => index + 1;

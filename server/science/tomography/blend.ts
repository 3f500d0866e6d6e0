/**
 * Blend segments: distance errors blur a cloud's near edge, so stars just in front of it sort
 * behind it and the reverse. A fit can then split one edge into two breaks with a short segment
 * between them whose mean lies between its neighbours' means. Such a segment is not a cloud.
 *
 * Test, for every segment j with neighbours on both sides (j − 1 and j + 1):
 *  1. Span: d_last − d_first ≤ k·√2·σ_rms, σ_rms = root mean square over the segment's stars of
 *     the half width of each 16–84 % distance interval, k = blendSpanSigma (default 3). Two
 *     stars at one true distance differ by √2·σ on average, and stars misordered around one
 *     edge come from within about ±1.5–2σ of it: the segment fits inside one blurred edge. (A
 *     test on the end stars alone failed when those happened to have small errors while the
 *     middle stars, the ones that cause the mixing, had large ones.)
 *  2. Mixture: its mean S_j = (q̄_j, ū_j) is consistent with a convex combination of its
 *     neighbours' means, α·S_{j−1} + (1 − α)·S_{j+1}, α ∈ [0, 1]:
 *       χ²(α) = Σ_{c ∈ q,u} (S_j,c − α S_{j−1},c − (1 − α) S_{j+1},c)² /
 *               (var S_j,c + α² var S_{j−1},c + (1 − α)² var S_{j+1},c),
 *     minimised over α (golden section), with tail probability P(χ²_1 ≥ χ²_min) > blendAlpha
 *     (default 0.05; two components less one fitted α = 1 degree of freedom).
 * Among the segments passing both, the one with the smallest χ² is merged: the union of j − 1,
 * j and j + 1 is re-fitted with the single best break (minimum segment length kept), and the
 * test is repeated until no segment passes.
 */

import { chi2SurvivalProbability } from '../chi2';
import type { SegmentTable } from './segmentTable';

export interface SegmentMoments {
  meanQ: number;
  meanU: number;
  varQ: number;
  varU: number;
}

const GOLDEN = (Math.sqrt(5) - 1) / 2;

function mixtureChi2(x: SegmentMoments, a: SegmentMoments, b: SegmentMoments, alpha: number): number {
  const beta = 1 - alpha;
  const dq = x.meanQ - alpha * a.meanQ - beta * b.meanQ;
  const du = x.meanU - alpha * a.meanU - beta * b.meanU;
  const vq = x.varQ + alpha * alpha * a.varQ + beta * beta * b.varQ;
  const vu = x.varU + alpha * alpha * a.varU + beta * beta * b.varU;
  return (dq * dq) / vq + (du * du) / vu;
}

/** min over α ∈ [0, 1] of χ²(α) for segment x between neighbours a (nearer) and b (farther). */
export function blendChi2(x: SegmentMoments, a: SegmentMoments, b: SegmentMoments): { chi2: number; alpha: number } {
  let lo = 0, hi = 1;
  let c = hi - GOLDEN * (hi - lo), d = lo + GOLDEN * (hi - lo);
  let fc = mixtureChi2(x, a, b, c), fd = mixtureChi2(x, a, b, d);
  for (let i = 0; i < 48; i++) {
    if (fc < fd) { hi = d; d = c; fd = fc; c = hi - GOLDEN * (hi - lo); fc = mixtureChi2(x, a, b, c); }
    else { lo = c; c = d; fc = fd; d = lo + GOLDEN * (hi - lo); fd = mixtureChi2(x, a, b, d); }
  }
  let alpha = 0.5 * (lo + hi);
  let chi2 = mixtureChi2(x, a, b, alpha);
  // The ends (pure neighbour) are candidates too: χ²(α) need not be unimodal.
  const f0 = mixtureChi2(x, a, b, 0), f1 = mixtureChi2(x, a, b, 1);
  if (f0 < chi2) { chi2 = f0; alpha = 0; }
  if (f1 < chi2) { chi2 = f1; alpha = 1; }
  return { chi2, alpha };
}

export interface BlendSettings {
  minSegmentLength: number;
  blendSpanSigma: number;
  blendAlpha: number;
}

const mA: SegmentMoments = { meanQ: 0, meanU: 0, varQ: 0, varU: 0 };
const mX: SegmentMoments = { meanQ: 0, meanU: 0, varQ: 0, varU: 0 };
const mB: SegmentMoments = { meanQ: 0, meanU: 0, varQ: 0, varU: 0 };

function readMoments(table: SegmentTable, start: number, end: number, out: SegmentMoments): void {
  table.select(start, end);
  out.meanQ = table.selMeanQ;
  out.meanU = table.selMeanU;
  out.varQ = table.selVarMeanQ;
  out.varU = table.selVarMeanU;
}

/**
 * Merges blend segments in place. `bounds` = [0, b1, …, n] in the table's current ordering;
 * `dist` and `sigma` are the distances (this ordering) and distance σ of the stars at each
 * position. Returns the number of merges.
 */
export function mergeBlends(
  table: SegmentTable, bounds: number[], dist: Float64Array, sigma: Float64Array, s: BlendSettings,
): number {
  let merges = 0;
  const chi2Max = chi2ForTail(s.blendAlpha);
  for (;;) {
    const nSeg = bounds.length - 1;
    if (nSeg < 3) break;
    let bestJ = -1;
    let bestChi2 = Infinity;
    for (let j = 1; j < nSeg - 1; j++) {
      const start = bounds[j], end = bounds[j + 1];
      let ss = 0;
      for (let i = start; i < end; i++) ss += sigma[i] * sigma[i];
      const span = dist[end - 1] - dist[start];
      if (span > s.blendSpanSigma * Math.sqrt((2 * ss) / (end - start))) continue;
      readMoments(table, bounds[j - 1], start, mA);
      readMoments(table, start, end, mX);
      readMoments(table, end, bounds[j + 2], mB);
      const { chi2 } = blendChi2(mX, mA, mB);
      if (chi2 < chi2Max && chi2 < bestChi2) { bestChi2 = chi2; bestJ = j; }
    }
    if (bestJ < 0) break;
    const a = bounds[bestJ - 1], b = bounds[bestJ + 2];
    const lo = a + s.minSegmentLength, hi = b - s.minSegmentLength;
    let bestC = -1;
    let bestCost = Infinity;
    if (b - a >= BOUNDED_SPLIT_MIN && table.n >= BOUNDED_SPLIT_MIN_N && hi > lo) {
      // Same argmin (first minimum in c order), pricing only splits whose lower bound
      // LB(a..c) + LB(c..b) can still reach the best: the most promising one first.
      const lbs = splitBounds.length > hi - lo ? splitBounds : (splitBounds = new Float64Array(2 * (hi - lo + 1)));
      let cMin = lo;
      for (let c = lo; c <= hi; c++) {
        const v = table.lowerBound(a, c) + table.lowerBound(c, b);
        lbs[c - lo] = v;
        if (v < lbs[cMin - lo]) cMin = c;
      }
      bestC = cMin;
      bestCost = table.cost(a, cMin) + table.cost(cMin, b);
      for (let c = lo; c <= hi; c++) {
        if (c === cMin) continue;
        const l = lbs[c - lo];
        if (l > bestCost || (l === bestCost && c > bestC)) continue;
        const v = table.cost(a, c) + table.cost(c, b);
        if (v < bestCost || (v === bestCost && c < bestC)) { bestCost = v; bestC = c; }
      }
    } else {
      for (let c = lo; c <= hi; c++) {
        const v = table.cost(a, c) + table.cost(c, b);
        if (v < bestCost) { bestCost = v; bestC = c; }
      }
    }
    bounds.splice(bestJ, 2, bestC);
    merges++;
  }
  return merges;
}

/** Merged spans at least this long search their split with bounds (speed only). */
const BOUNDED_SPLIT_MIN = 32;
/** …in cells of at least this many stars (the bounds' prefix sums cost O(n·grid) to build). */
const BOUNDED_SPLIT_MIN_N = 48;
let splitBounds = new Float64Array(64);

const chi2Cache = new Map<number, number>();

/** χ²_1 value whose tail probability is alpha (bisection on chi2SurvivalProbability). */
export function chi2ForTail(alpha: number): number {
  const hit = chi2Cache.get(alpha);
  if (hit !== undefined) return hit;
  if (!(alpha > 0 && alpha < 1)) throw new RangeError(`blend tail probability ${alpha}: expected 0 < alpha < 1`);
  let lo = 0, hi = 1;
  while (chi2SurvivalProbability(hi, 1) > alpha) hi *= 2;
  for (let i = 0; i < 100; i++) {
    const mid = 0.5 * (lo + hi);
    if (chi2SurvivalProbability(mid, 1) > alpha) lo = mid; else hi = mid;
  }
  const x = 0.5 * (lo + hi);
  chi2Cache.set(alpha, x);
  return x;
}

/**
 * Optimal partitioning of n ordered stars into segments of at least `minSegmentLength` stars,
 * minimising Σ C(segment) + penalty·(number of breaks).
 *
 * `peltPartition` is optimal partitioning (Jackson et al. 2005) with PELT pruning (Killick,
 * Fearnhead & Eckley 2012, JASA 107, 1590): a last-break candidate τ is dropped at time t when
 * F(τ) + C(τ..t) ≥ F(t) + tolerance. That is safe when C(a..b) + C(b..c) ≤ C(a..c) + K; here
 * K = 0 because C is −2 max ln L with its own mean and scatter per segment, so fitting two
 * halves separately can only raise the maximised likelihood. With a minimum segment length the
 * argument needs t itself to be a legal last break for the future end T, i.e. T ≥ t + min, so a
 * pruned candidate is removed only from T = t + min on (before that it stays in the race).
 *
 * `exhaustivePartition` enumerates every legal segmentation (2^(n−1) compositions at most): the
 * reference PELT is tested against.
 */

import type { SegmentCoster } from './segmentTable';

export interface Partition {
  /** Start index of every segment after the first (ascending). */
  breaks: number[];
  /** Σ C + penalty·breaks.length. */
  totalCost: number;
}

/** Numerical slack in the pruning test (cost units), far below any penalty. */
const PRUNE_TOLERANCE = 1e-9;

/**
 * Reusable PELT solver (no allocation per call once sized).
 *
 * Skipping exact costs: when the coster exposes `singletonCost` (the cost of each star alone,
 * ln(2πσq²) + ln(2πσu²)), superadditivity C(A ∪ B) ≥ C(A) + C(B) gives a running lower bound
 * C(τ..t+1) ≥ C(τ..t) + C({t}). A candidate whose bound already cannot beat the best value at t
 * is not priced exactly; its bound is carried on. Pruning uses the bound too (F(τ) + bound ≥
 * F(t) implies F(τ) + C ≥ F(t)), so the result is the exact optimum, with far fewer exact costs
 * over long stretches without breaks, where PELT itself cannot prune.
 */
export class PeltSolver {
  private F: Float64Array;
  private last: Int32Array;
  private cand: Int32Array;
  private prunedFrom: Int32Array;
  private lb: Float64Array;
  private capacity: number;
  /** Exact segment costs requested in the last solve (for benchmarks). */
  evaluations = 0;

  constructor(capacity = 16) {
    this.capacity = 0;
    this.F = new Float64Array(0);
    this.last = new Int32Array(0);
    this.cand = new Int32Array(0);
    this.prunedFrom = new Int32Array(0);
    this.lb = new Float64Array(0);
    this.ensure(capacity);
  }

  private ensure(n: number): void {
    if (n + 1 <= this.capacity) return;
    const c = Math.max(n + 1, 2 * this.capacity);
    this.capacity = c;
    this.F = new Float64Array(c);
    this.last = new Int32Array(c);
    this.cand = new Int32Array(c);
    this.prunedFrom = new Int32Array(c);
    this.lb = new Float64Array(c);
  }

  /**
   * Writes the optimal breaks into `breaksOut` (cleared first) and returns the total cost.
   * n < 2·minSegmentLength admits no break: one segment (even shorter than the minimum).
   */
  solve(n: number, minSeg: number, penalty: number, coster: SegmentCoster, breaksOut: number[]): number {
    breaksOut.length = 0;
    this.evaluations = 0;
    if (n === 0) return 0;
    if (n < 2 * minSeg) {
      this.evaluations = 1;
      return coster.cost(0, n);
    }
    this.ensure(n);
    const { F, last, cand, prunedFrom, lb } = this;
    const single = coster.singletonCost;
    F[0] = -penalty;
    last[0] = 0;
    let nCand = 0;
    const NEVER = 0x7fffffff;
    for (let t = minSeg; t <= n; t++) {
      // Bounds grow by the star that joins every open segment.
      if (single) {
        if (t > minSeg) {
          const add = single[t - 1];
          for (let j = 0; j < nCand; j++) lb[cand[j]] += add;
        }
      } else {
        for (let j = 0; j < nCand; j++) lb[cand[j]] = -Infinity; // no bound without singletons
      }
      // τ becomes usable once t − τ ≥ minSeg; legal τ are 0 and minSeg..n−minSeg.
      const tau = t - minSeg;
      if (tau === 0 || tau >= minSeg) {
        cand[nCand++] = tau;
        prunedFrom[tau] = NEVER;
        let b = -Infinity;
        if (single) {
          b = 0;
          for (let i = tau; i < t; i++) b += single[i];
        }
        lb[tau] = b;
      }
      // Drop candidates whose pruning has taken effect; price the most promising one first.
      let k = 0;
      let first = -1;
      let firstBound = Infinity;
      for (let j = 0; j < nCand; j++) {
        const c = cand[j];
        if (prunedFrom[c] <= t) continue;
        cand[k++] = c;
        const v = F[c] + lb[c];
        if (first < 0 || v < firstBound) { firstBound = v; first = c; }
      }
      nCand = k;
      let best = Infinity;
      let arg = -1;
      if (first >= 0) {
        const exact = coster.cost(first, t);
        this.evaluations++;
        lb[first] = exact;
        best = F[first] + exact + penalty;
        arg = first;
      }
      for (let j = 0; j < nCand; j++) {
        const c = cand[j];
        if (c === first) continue;
        if (F[c] + lb[c] + penalty >= best) continue; // cannot win at t (bound only)
        const exact = coster.cost(c, t);
        this.evaluations++;
        lb[c] = exact;
        const v = F[c] + exact + penalty;
        if (v < best || (v === best && c < arg)) { best = v; arg = c; }
      }
      F[t] = best;
      last[t] = arg;
      // Mark candidates that can never beat t as a last break (effective from t + minSeg).
      if (t <= n - minSeg) {
        const effective = t + minSeg;
        for (let j = 0; j < nCand; j++) {
          const c = cand[j];
          if (prunedFrom[c] !== NEVER) continue;
          if (F[c] + lb[c] >= best + PRUNE_TOLERANCE) prunedFrom[c] = effective;
        }
      }
    }
    // Backtrack.
    let t = n;
    while (t > 0) {
      const c = last[t];
      if (c > 0) breaksOut.push(c);
      t = c;
    }
    breaksOut.reverse();
    return F[n];
  }
}

/** PELT on a fresh solver (convenience). */
export function peltPartition(n: number, minSeg: number, penalty: number, coster: SegmentCoster): Partition {
  const breaks: number[] = [];
  const totalCost = new PeltSolver(n).solve(n, minSeg, penalty, coster, breaks);
  return { breaks, totalCost };
}

/**
 * Every segmentation with all segments ≥ minSeg (or the single segment when none is legal),
 * the cheapest returned. Exponential: for tests on small n only.
 */
export function exhaustivePartition(n: number, minSeg: number, penalty: number, coster: SegmentCoster): Partition {
  if (n === 0) return { breaks: [], totalCost: 0 };
  if (n < 2 * minSeg) return { breaks: [], totalCost: coster.cost(0, n) };
  if (n > 24) throw new RangeError(`exhaustivePartition: n = ${n} is too large (≤ 24)`);
  let best: Partition = { breaks: [], totalCost: Infinity };
  const current: number[] = [];
  const recurse = (start: number, acc: number): void => {
    // Close with a final segment [start, n).
    if (n - start >= minSeg) {
      const total = acc + coster.cost(start, n);
      if (total < best.totalCost) best = { breaks: current.slice(), totalCost: total };
    }
    for (let next = start + minSeg; next <= n - minSeg; next++) {
      current.push(next);
      recurse(next, acc + coster.cost(start, next) + penalty);
      current.pop();
    }
  };
  recurse(0, 0);
  return best;
}

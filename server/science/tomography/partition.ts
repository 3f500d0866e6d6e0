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
/** Anchored bounds pay for their prefix sums from about this many stars on (speed only). */
const ANCHOR_MIN_N = 48;

/**
 * Reusable PELT solver (no allocation per call once sized).
 *
 * Skipping exact costs: when the coster exposes `singletonCost` (the cost of each star alone,
 * ln(2πσq²) + ln(2πσu²)), superadditivity C(A ∪ B) ≥ C(A) + C(B) gives a running lower bound
 * C(τ..t+1) ≥ C(τ..t) + C({t}). A candidate whose bound already cannot beat the best value at t
 * is not priced exactly; its bound is carried on. Pruning uses the bound too (F(τ) + bound ≥
 * F(t) implies F(τ) + C ≥ F(t)), so the result is the exact optimum, with far fewer exact costs
 * over long stretches without breaks, where PELT itself cannot prune.
 *
 * The singleton bound loses about 2 per star (the χ² each star adds), so it fails a few stars
 * after each exact cost. With `lowerBound` as well, a candidate τ priced exactly at t0 keeps
 * the anchor (t0, C(τ..t0)), and at t the bound C(τ..t) ≥ C(τ..t0) + C(t0..t) ≥ C(τ..t0) +
 * LB(t0..t) (superadditivity), which loses only the join's O(1) gain; LB(t0..t) is shared by
 * all candidates with that anchor.
 *
 * Lazy steps (with `upperBound` too): over a stretch without a break the winner at each t is
 * the same τ, and pricing C(τ..t) exactly for every t is O(n²) work. When the most promising
 * candidate's upper bound Fhi(τ) + UB(τ..t) + penalty is at most every other candidate's lower
 * bound, τ is the argmin (exact ties aside) without its exact cost: F[t] then holds a lower
 * bound, Fhi[t] an upper one, and F(t) is priced (resolve) only when t itself is priced as a
 * candidate or lies on the final path — the same sums the eager step forms. Bounds only decide
 * what is skipped, so the result is still the exact optimum.
 */
export class PeltSolver {
  private F: Float64Array;
  private last: Int32Array;
  private cand: Int32Array;
  private prunedFrom: Int32Array;
  private lb: Float64Array;
  /** F[t] is F(t) when known[t], else a lower bound; Fhi[t] an upper bound; chain scratch. */
  private Fhi: Float64Array;
  private known: Uint8Array;
  private stack: Int32Array;
  private base: Float64Array;
  private anchor: Int32Array;
  private anchorStamp: Int32Array;
  private anchorBound: Float64Array;
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
    this.Fhi = new Float64Array(0);
    this.known = new Uint8Array(0);
    this.stack = new Int32Array(0);
    this.base = new Float64Array(0);
    this.anchor = new Int32Array(0);
    this.anchorStamp = new Int32Array(0);
    this.anchorBound = new Float64Array(0);
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
    this.Fhi = new Float64Array(c);
    this.known = new Uint8Array(c);
    this.stack = new Int32Array(c);
    this.base = new Float64Array(c);
    this.anchor = new Int32Array(c);
    this.anchorStamp = new Int32Array(c);
    this.anchorBound = new Float64Array(c);
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
    const { F, Fhi, known, last, cand, prunedFrom, lb, base, anchor, anchorStamp, anchorBound } = this;
    const single = coster.singletonCost;
    const useAnchors = single !== undefined && coster.lowerBound !== undefined && n >= ANCHOR_MIN_N;
    const useLazy = useAnchors && coster.upperBound !== undefined;
    if (useAnchors) anchorStamp.fill(-1, 0, n + 1);
    // C(c..t) ≥ C(c..anchor) + LB(anchor..t): raises lb[c] to that, LB priced once per anchor and t.
    const anchoredLb = (c: number, t: number): number => {
      const an = anchor[c];
      if (anchorStamp[an] !== t) {
        anchorStamp[an] = t;
        anchorBound[an] = coster.lowerBound!(an, t);
      }
      const a = base[c] + anchorBound[an];
      if (a > lb[c]) lb[c] = a;
      return lb[c];
    };
    F[0] = -penalty;
    Fhi[0] = -penalty;
    known[0] = 1;
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
        base[tau] = 0;
        anchor[tau] = tau;
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
      let lazy = false;
      if (useLazy && first >= 0) {
        // Lazy step: if every other candidate's lower bound is at least the first's upper
        // bound, the first is the argmin; F(t) is then priced only if ever needed.
        if (anchor[first] < t) anchoredLb(first, t);
        const hi = Fhi[first] + coster.upperBound!(first, t) + penalty;
        lazy = true;
        for (let j = 0; j < nCand; j++) {
          const c = cand[j];
          if (c === first || F[c] + lb[c] + penalty >= hi) continue;
          if (anchor[c] < t && F[c] + anchoredLb(c, t) + penalty >= hi) continue;
          lazy = false;
          break;
        }
        if (lazy) {
          F[t] = F[first] + lb[first] + penalty;
          Fhi[t] = hi;
          known[t] = 0;
          last[t] = first;
        }
      }
      if (!lazy) {
        let best = Infinity;
        let arg = -1;
        if (first >= 0) {
          const exact = coster.cost(first, t);
          this.evaluations++;
          lb[first] = exact;
          base[first] = exact;
          anchor[first] = t;
          best = this.resolve(first, coster, penalty) + exact + penalty;
          arg = first;
        }
        for (let j = 0; j < nCand; j++) {
          const c = cand[j];
          if (c === first) continue;
          if (F[c] + lb[c] + penalty >= best) continue; // cannot win at t (bound only)
          if (useAnchors && anchor[c] < t && F[c] + anchoredLb(c, t) + penalty >= best) continue;
          const exact = coster.cost(c, t);
          this.evaluations++;
          lb[c] = exact;
          base[c] = exact;
          anchor[c] = t;
          const v = this.resolve(c, coster, penalty) + exact + penalty;
          if (v < best || (v === best && c < arg)) { best = v; arg = c; }
        }
        F[t] = best;
        Fhi[t] = best;
        known[t] = 1;
        last[t] = arg;
      }
      // Mark candidates that can never beat t as a last break (effective from t + minSeg).
      if (t <= n - minSeg) {
        const effective = t + minSeg;
        const ft = Fhi[t];
        for (let j = 0; j < nCand; j++) {
          const c = cand[j];
          if (prunedFrom[c] !== NEVER) continue;
          if (F[c] + lb[c] >= ft + PRUNE_TOLERANCE) prunedFrom[c] = effective;
        }
      }
    }
    const total = this.resolve(n, coster, penalty);
    // Backtrack.
    let t = n;
    while (t > 0) {
      const c = last[t];
      if (c > 0) breaksOut.push(c);
      t = c;
    }
    breaksOut.reverse();
    return total;
  }

  /**
   * Exact F(c), pricing the lazy steps behind it: F(y) = F(last(y)) + C(last(y)..y) + penalty
   * down the chain to a known value (the same sum the exact step would have formed).
   */
  private resolve(c: number, coster: SegmentCoster, penalty: number): number {
    const { F, Fhi, known, last, stack } = this;
    if (known[c]) return F[c];
    let depth = 0;
    let x = c;
    while (!known[x]) { stack[depth++] = x; x = last[x]; }
    for (let i = depth - 1; i >= 0; i--) {
      const y = stack[i];
      const w = last[y];
      const exact = coster.cost(w, y);
      this.evaluations++;
      F[y] = F[w] + exact + penalty;
      Fhi[y] = F[y];
      known[y] = 1;
    }
    return F[c];
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

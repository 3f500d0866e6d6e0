/**
 * Segment fits of one cell, memoised across orderings of its stars.
 *
 * The Monte Carlo repeats the fit on many distance draws; most contiguous segments of one
 * draw's ordering are the same sets of stars as in other draws (stars swap places only with
 * neighbours within their distance errors), and a segment's fit depends only on its set. Each
 * set is keyed by the XOR of two random 32-bit keys per star (Zobrist hashing, so a segment's key
 * is prefixXor[end] ^ prefixXor[start], O(1)) plus its length. Two different sets share a key
 * with probability 2^-64 per pair — for 10^4 distinct segments per cell about 3·10^-12 per cell.
 */

import { mulberry32, hashSeed } from '../random';
import {
  fitSegmentInto, FIT_SIZE, FIT_COST, FIT_SCATTER_VAR, FIT_MEAN_Q, FIT_MEAN_U,
  FIT_VAR_MEAN_Q, FIT_VAR_MEAN_U, scanSegment, scannedTHi, scannedVMin, scannedEqualVariances,
  minimiseFromSamples, writeFitAt, SEGMENT_GRID_RATIO, SEGMENT_GRID_FLOOR_FRACTION, SEGMENT_GRID_MAX,
} from './segmentCost';

/**
 * Segments at least this long sample the profile from per-ordering prefix sums on one grid of
 * t = s² values shared by the cell (O(grid) per segment instead of O(grid·m)); shorter ones
 * sample it directly. Both then polish the same way, so they give the same fit.
 */
const PREFIX_GRID_MIN_LENGTH = 12;

/** Anything that can price a segment [start, end) of the current ordering. */
export interface SegmentCoster {
  cost(start: number, end: number): number;
  /**
   * Optional: cost of each star alone at each position (a lower bound per star, since costs are
   * superadditive); lets PELT skip exact costs that cannot matter.
   */
  readonly singletonCost?: Float64Array;
  /**
   * Optional: a cheap lower bound on cost(start, end) (never above it); lets PELT keep skipping
   * candidates over long stretches without a break.
   */
  lowerBound?(start: number, end: number): number;
  /** Optional: a cheap upper bound on cost(start, end) (never below it). */
  upperBound?(start: number, end: number): number;
}

export class SegmentTable implements SegmentCoster {
  readonly n: number;
  /** Values in the current ordering. */
  readonly q: Float64Array;
  readonly u: Float64Array;
  readonly vq: Float64Array;
  readonly vu: Float64Array;
  /** Canonical star index at each position of the current ordering. */
  readonly order: Int32Array;
  /** ln(2πσq²) + ln(2πσu²) of the star at each position: its cost alone. */
  readonly singletonCost: Float64Array;
  private readonly keyA: Int32Array;
  private readonly keyB: Int32Array;
  private readonly prefA: Int32Array;
  private readonly prefB: Int32Array;
  private readonly srcQ: Float64Array;
  private readonly srcU: Float64Array;
  private readonly srcVq: Float64Array;
  private readonly srcVu: Float64Array;
  private readonly srcSingle: Float64Array;
  // Open-addressing hash table: slot → row of `rows` (FIT_SIZE numbers each).
  private mask: number;
  private tabA: Int32Array;
  private tabB: Int32Array;
  private tabLen: Int32Array;
  private tabRow: Int32Array;
  private rows: Float64Array;
  private nRows = 0;
  // Cell grid of t values and per-star tables on it (canonical order), built on first need.
  private gridG = 0;
  private gridT: Float64Array = new Float64Array(0);
  private starLn: Float64Array = new Float64Array(0);
  private starWq: Float64Array = new Float64Array(0);
  private starWu: Float64Array = new Float64Array(0);
  private cq: Float64Array;
  private cu: Float64Array;
  // Prefix sums over the current ordering, [pos·G + k]: Σ ln, Σw, Σw·x, Σw·x² for q and u.
  private pLn: Float64Array = new Float64Array(0);
  private pWq: Float64Array = new Float64Array(0);
  private pSq: Float64Array = new Float64Array(0);
  private pSqq: Float64Array = new Float64Array(0);
  private pWu: Float64Array = new Float64Array(0);
  private pSu: Float64Array = new Float64Array(0);
  private pSuu: Float64Array = new Float64Array(0);
  // The same for Σw², Σw²·x, Σw²·x² (slope of χ²(t), for lowerBound).
  private p2Wq: Float64Array = new Float64Array(0);
  private p2Sq: Float64Array = new Float64Array(0);
  private p2Sqq: Float64Array = new Float64Array(0);
  private p2Wu: Float64Array = new Float64Array(0);
  private p2Su: Float64Array = new Float64Array(0);
  private p2Suu: Float64Array = new Float64Array(0);
  private prefixReady = false;
  private directWork = 0;
  private sampleT: Float64Array = new Float64Array(SEGMENT_GRID_MAX + 2);
  private sampleF: Float64Array = new Float64Array(SEGMENT_GRID_MAX + 2);
  /** Fits computed (cache misses) and looked up (hits): for benchmarks. */
  misses = 0;
  hits = 0;
  private lastRow = 0;

  /**
   * @param q,u,qErr,uErr per star in canonical order
   * @param keySeed seeds the Zobrist keys (any fixed number; results do not depend on it)
   */
  constructor(q: ArrayLike<number>, u: ArrayLike<number>, qErr: ArrayLike<number>, uErr: ArrayLike<number>, keySeed = 0) {
    const n = q.length;
    this.n = n;
    this.q = new Float64Array(n);
    this.u = new Float64Array(n);
    this.vq = new Float64Array(n);
    this.vu = new Float64Array(n);
    this.order = new Int32Array(n);
    this.singletonCost = new Float64Array(n);
    this.srcSingle = new Float64Array(n);
    this.srcQ = Float64Array.from(q);
    this.srcU = Float64Array.from(u);
    this.srcVq = new Float64Array(n);
    this.srcVu = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      this.srcVq[i] = qErr[i] * qErr[i];
      this.srcVu[i] = uErr[i] * uErr[i];
      this.srcSingle[i] = Math.log(2 * Math.PI * this.srcVq[i]) + Math.log(2 * Math.PI * this.srcVu[i]);
    }
    let mq = 0, mu = 0;
    for (let i = 0; i < n; i++) { mq += this.srcQ[i]; mu += this.srcU[i]; }
    mq /= Math.max(1, n); mu /= Math.max(1, n);
    this.cq = new Float64Array(n);
    this.cu = new Float64Array(n);
    for (let i = 0; i < n; i++) { this.cq[i] = this.srcQ[i] - mq; this.cu[i] = this.srcU[i] - mu; }
    this.keyA = new Int32Array(n);
    this.keyB = new Int32Array(n);
    const rng = mulberry32(hashSeed('segment-keys', keySeed));
    for (let i = 0; i < n; i++) {
      this.keyA[i] = Math.floor(rng() * 4294967296) | 0;
      this.keyB[i] = Math.floor(rng() * 4294967296) | 0;
    }
    this.prefA = new Int32Array(n + 1);
    this.prefB = new Int32Array(n + 1);
    const cap = nextPow2(Math.max(64, 8 * n));
    this.mask = cap - 1;
    this.tabA = new Int32Array(cap);
    this.tabB = new Int32Array(cap);
    this.tabLen = new Int32Array(cap);
    this.tabRow = new Int32Array(cap);
    this.rows = new Float64Array((cap >> 1) * FIT_SIZE);
  }

  /** Sets the current ordering (order[pos] = canonical index). */
  setOrder(order: ArrayLike<number>): void {
    this.prefixReady = false;
    this.directWork = 0;
    let a = 0, b = 0;
    this.prefA[0] = 0;
    this.prefB[0] = 0;
    for (let pos = 0; pos < this.n; pos++) {
      const i = order[pos];
      this.order[pos] = i;
      this.q[pos] = this.srcQ[i];
      this.u[pos] = this.srcU[i];
      this.vq[pos] = this.srcVq[i];
      this.vu[pos] = this.srcVu[i];
      this.singletonCost[pos] = this.srcSingle[i];
      a ^= this.keyA[i];
      b ^= this.keyB[i];
      this.prefA[pos + 1] = a;
      this.prefB[pos + 1] = b;
    }
  }

  /** Key and slot of the last find(): where a new fit of that segment is stored. */
  private findKa = 0;
  private findKb = 0;
  private findSlot = 0;

  /**
   * Row index of the fit of [start, end) if already stored, else −1 (open addressing on the
   * segment's two XOR keys and length; findSlot is then the free slot for it).
   */
  private find(start: number, end: number): number {
    const ka = (this.findKa = this.prefA[end] ^ this.prefA[start]);
    const kb = (this.findKb = this.prefB[end] ^ this.prefB[start]);
    const len = end - start;
    let slot = (ka ^ Math.imul(kb, 0x9e3779b1)) & this.mask;
    for (;;) {
      const l = this.tabLen[slot];
      if (l === 0) break;
      if (l === len && this.tabA[slot] === ka && this.tabB[slot] === kb) return this.tabRow[slot];
      slot = (slot + 1) & this.mask;
    }
    this.findSlot = slot;
    return -1;
  }

  /**
   * Upper bound on cost(start, end): the stored cost if there is one; for a short segment the
   * cost itself; otherwise f(0) from the prefix sums (plus a rounding margin). A long new
   * segment is fitted from these prefix sums (row), whose search keeps the best of its samples,
   * t = 0 among them, so its cost is at most f(0); the closed form for equal variances is the
   * global minimum.
   */
  upperBound(start: number, end: number): number {
    const r = this.find(start, end);
    if (r >= 0) return this.rows[r * FIT_SIZE + FIT_COST];
    const len = end - start;
    if (len < PREFIX_GRID_MIN_LENGTH) return this.cost(start, end);
    if (!this.prefixReady) this.buildPrefix();
    const G = this.gridG;
    const s0 = start * G, e0 = end * G;
    const wq = this.pWq[e0] - this.pWq[s0], sq = this.pSq[e0] - this.pSq[s0];
    const wu = this.pWu[e0] - this.pWu[s0], su = this.pSu[e0] - this.pSu[s0];
    const chi2 = (this.pSqq[e0] - this.pSqq[s0] - (sq * sq) / wq) + (this.pSuu[e0] - this.pSuu[s0] - (su * su) / wu);
    const c = this.pLn[e0] - this.pLn[s0] + (chi2 > 0 ? chi2 : 0) + 2 * len * LN_2PI;
    return c + 1e-9 * (Math.abs(c) + 2 * len) + 1e-9;
  }

  /** Row index (into the fit store) of the fit of [start, end), computing it if new. */
  private row(start: number, end: number): number {
    const found = this.find(start, end);
    if (found >= 0) {
      this.hits++;
      return found;
    }
    const len = end - start;
    const slot = this.findSlot;
    const r = this.nRows++;
    // Building the prefix sums costs about what sampling 2n stars directly does: build them
    // once this ordering's long misses have sampled that many. (Once built, every long miss
    // takes this path: upperBound relies on it.)
    if (len >= PREFIX_GRID_MIN_LENGTH && (this.prefixReady || this.directWork >= 2 * this.n)) {
      this.fitFromPrefix(start, end, r * FIT_SIZE);
    } else {
      this.directWork += len;
      fitSegmentInto(this.q, this.u, this.vq, this.vu, start, end, this.rows, r * FIT_SIZE);
    }
    this.misses++;
    this.tabLen[slot] = len;
    this.tabA[slot] = this.findKa;
    this.tabB[slot] = this.findKb;
    this.tabRow[slot] = r;
    if (2 * this.nRows > this.mask) this.grow();
    return r;
  }

  /** The cell's t grid: 0, then min σ²/16·√2^k up to the first value ≥ (largest range)². */
  private buildGrid(): void {
    const n = this.n;
    let vMin = Infinity, qMin = Infinity, qMax = -Infinity, uMin = Infinity, uMax = -Infinity;
    for (let i = 0; i < n; i++) {
      vMin = Math.min(vMin, this.srcVq[i], this.srcVu[i]);
      qMin = Math.min(qMin, this.srcQ[i]); qMax = Math.max(qMax, this.srcQ[i]);
      uMin = Math.min(uMin, this.srcU[i]); uMax = Math.max(uMax, this.srcU[i]);
    }
    const range = Math.max(qMax - qMin, uMax - uMin);
    const tHi = range * range;
    const ts: number[] = [0];
    let t = vMin * SEGMENT_GRID_FLOOR_FRACTION;
    while (ts.length < SEGMENT_GRID_MAX) {
      ts.push(t);
      if (t >= tHi) break;
      t *= SEGMENT_GRID_RATIO;
    }
    const G = ts.length;
    this.gridG = G;
    this.gridT = Float64Array.from(ts);
    this.starLn = new Float64Array(n * G);
    this.starWq = new Float64Array(n * G);
    this.starWu = new Float64Array(n * G);
    for (let i = 0; i < n; i++) {
      for (let k = 0; k < G; k++) {
        const a = this.srcVq[i] + ts[k], b = this.srcVu[i] + ts[k];
        this.starLn[i * G + k] = Math.log(a) + Math.log(b);
        this.starWq[i * G + k] = 1 / a;
        this.starWu[i * G + k] = 1 / b;
      }
    }
    const size = (n + 1) * G;
    this.pLn = new Float64Array(size);
    this.pWq = new Float64Array(size); this.pSq = new Float64Array(size); this.pSqq = new Float64Array(size);
    this.pWu = new Float64Array(size); this.pSu = new Float64Array(size); this.pSuu = new Float64Array(size);
    this.p2Wq = new Float64Array(size); this.p2Sq = new Float64Array(size); this.p2Sqq = new Float64Array(size);
    this.p2Wu = new Float64Array(size); this.p2Su = new Float64Array(size); this.p2Suu = new Float64Array(size);
  }

  private buildPrefix(): void {
    if (this.gridG === 0) this.buildGrid();
    const G = this.gridG;
    const { pLn, pWq, pSq, pSqq, pWu, pSu, pSuu, starLn, starWq, starWu, cq, cu } = this;
    const { p2Wq, p2Sq, p2Sqq, p2Wu, p2Su, p2Suu } = this;
    for (let pos = 0; pos < this.n; pos++) {
      const i = this.order[pos];
      const x = cq[i], y = cu[i];
      const src = i * G, prev = pos * G, cur = prev + G;
      for (let k = 0; k < G; k++) {
        const a = starWq[src + k], b = starWu[src + k];
        pLn[cur + k] = pLn[prev + k] + starLn[src + k];
        pWq[cur + k] = pWq[prev + k] + a;
        pSq[cur + k] = pSq[prev + k] + a * x;
        pSqq[cur + k] = pSqq[prev + k] + a * x * x;
        pWu[cur + k] = pWu[prev + k] + b;
        pSu[cur + k] = pSu[prev + k] + b * y;
        pSuu[cur + k] = pSuu[prev + k] + b * y * y;
        const a2 = a * a, b2 = b * b;
        p2Wq[cur + k] = p2Wq[prev + k] + a2;
        p2Sq[cur + k] = p2Sq[prev + k] + a2 * x;
        p2Sqq[cur + k] = p2Sqq[prev + k] + a2 * x * x;
        p2Wu[cur + k] = p2Wu[prev + k] + b2;
        p2Su[cur + k] = p2Su[prev + k] + b2 * y;
        p2Suu[cur + k] = p2Suu[prev + k] + b2 * y * y;
      }
    }
    this.prefixReady = true;
  }

  /** Fit of a long segment: profile sampled from the prefix sums, then polished directly. */
  private fitFromPrefix(start: number, end: number, offset: number): void {
    const { q, u, vq, vu } = this;
    scanSegment(q, u, vq, vu, start, end);
    const tHi = scannedTHi();
    if (tHi === 0 || scannedEqualVariances()) {
      fitSegmentInto(q, u, vq, vu, start, end, this.rows, offset);
      return;
    }
    if (!this.prefixReady) this.buildPrefix();
    const G = this.gridG;
    const { pLn, pWq, pSq, pSqq, pWu, pSu, pSuu, gridT, sampleT, sampleF } = this;
    const s0 = start * G, e0 = end * G;
    let g = 0;
    for (let k = 0; k < G; k++) {
      const wq = pWq[e0 + k] - pWq[s0 + k], sq = pSq[e0 + k] - pSq[s0 + k];
      const wu = pWu[e0 + k] - pWu[s0 + k], su = pSu[e0 + k] - pSu[s0 + k];
      const chi2 = (pSqq[e0 + k] - pSqq[s0 + k] - (sq * sq) / wq) + (pSuu[e0 + k] - pSuu[s0 + k] - (su * su) / wu);
      sampleT[g] = gridT[k];
      sampleF[g] = pLn[e0 + k] - pLn[s0 + k] + (chi2 > 0 ? chi2 : 0);
      g++;
      if (gridT[k] >= tHi) break;
    }
    const t = minimiseFromSamples(q, u, vq, vu, start, end, sampleT, sampleF, g, scannedVMin());
    writeFitAt(q, u, vq, vu, start, end, t, this.rows, offset);
  }

  /**
   * Lower bound on cost(start, end) from the prefix sums, O(grid). With t = s², the profile is
   * f(t) = L(t) + X(t): L(t) = Σ ln(σ² + t) is concave, X(t) = min over the means of
   * Σ r²/(σ² + t) is convex (a minimum over the means of functions jointly convex in
   * (mean, t)), with X'(t) = −Σ w² r² (envelope theorem). On each grid interval [a, b],
   * f ≥ chord of L + max(tangent of X at a, tangent at b, 0), a convex piecewise-linear function
   * whose minimum lies at an end or a crossing; beyond the last grid point f ≥ L(t_G). The
   * minimum over intervals, less a rounding margin, bounds min f from below.
   */
  lowerBound(start: number, end: number): number {
    if (!this.prefixReady) this.buildPrefix();
    const G = this.gridG;
    const { pLn, pWq, pSq, pSqq, pWu, pSu, pSuu, gridT } = this;
    const s0 = start * G, e0 = end * G;
    let best = Infinity;
    let ta = 0, La = 0, Xa = 0, Da = 0, mqa = 0, mua = 0, ka = 0;
    let haveDa = false;
    for (let k = 0; k < G; k++) {
      // g ≥ L(ta) on [ta, tb] and L increases with t: no later interval can go lower.
      if (k > 0 && La >= best) break;
      const i = e0 + k, j = s0 + k;
      const wq = pWq[i] - pWq[j], sq = pSq[i] - pSq[j];
      const wu = pWu[i] - pWu[j], su = pSu[i] - pSu[j];
      const mq = sq / wq, mu = su / wu;
      const X = (pSqq[i] - pSqq[j] - sq * mq) + (pSuu[i] - pSuu[j] - su * mu);
      const tb = gridT[k], Lb = pLn[i] - pLn[j];
      const Xb = X > 0 ? X : 0;
      let Db = 0;
      let haveDb = false;
      // Cheap test first: on [ta, tb], L ≥ L(ta) and X ≥ X(tb) (X decreases).
      if (k > 0 && La + Xb < best) {
        if (!haveDa) Da = this.chiSlope(s0 + ka, e0 + ka, mqa, mua);
        Db = this.chiSlope(j, i, mq, mu);
        haveDb = true;
        const slope = (Lb - La) / (tb - ta);
        // g(t) = La + slope·(t − ta) + max(Xa + Da(t − ta), Xb + Db(t − tb), 0): convex,
        // piecewise linear; its minimum is at an end or where two of the three lines cross.
        const h = tb - ta;
        const xb1 = Xa + Da * h; // tangent at ta, evaluated at tb
        const xa2 = Xb - Db * h; // tangent at tb, evaluated at ta
        let v = La + (Xa > xa2 ? Xa : xa2);
        const vb = Lb + (xb1 > Xb ? xb1 : Xb);
        if (vb < v) v = vb;
        // the two tangents cross; one tangent reaches zero (there the other one is the max)
        const tc = Da < Db ? (Xb - Xa - Db * tb + Da * ta) / (Da - Db) : NaN;
        if (tc > ta && tc < tb) v = lowerOf(v, La, slope, tc - ta, Xa + Da * (tc - ta));
        const tza = Da < 0 ? ta - Xa / Da : NaN;
        if (tza > ta && tza < tb) v = lowerOf(v, La, slope, tza - ta, Xb + Db * (tza - tb));
        const tzb = Db < 0 ? tb - Xb / Db : NaN;
        if (tzb > ta && tzb < tb) v = lowerOf(v, La, slope, tzb - ta, Xa + Da * (tzb - ta));
        if (v < best) best = v;
      }
      ta = tb; La = Lb; Xa = Xb; Da = Db; haveDa = haveDb; mqa = mq; mua = mu; ka = k;
    }
    if (La < best) best = La; // t beyond the grid: X ≥ 0, L increasing
    const c = best + 2 * (end - start) * LN_2PI;
    return c - 1e-9 * (Math.abs(c) + 2 * (end - start)) - 1e-9;
  }

  /** X'(t) = −Σ w² r² at one grid point from the prefix sums (i = end, j = start index). */
  private chiSlope(j: number, i: number, mq: number, mu: number): number {
    const { p2Wq, p2Sq, p2Sqq, p2Wu, p2Su, p2Suu } = this;
    const w2r2 =
      (p2Sqq[i] - p2Sqq[j]) - 2 * mq * (p2Sq[i] - p2Sq[j]) + mq * mq * (p2Wq[i] - p2Wq[j]) +
      (p2Suu[i] - p2Suu[j]) - 2 * mu * (p2Su[i] - p2Su[j]) + mu * mu * (p2Wu[i] - p2Wu[j]);
    return w2r2 > 0 ? -w2r2 : 0;
  }

  private grow(): void {
    const oldCap = this.mask + 1;
    const cap = oldCap * 2;
    const { tabA, tabB, tabLen, tabRow } = this;
    this.mask = cap - 1;
    this.tabA = new Int32Array(cap);
    this.tabB = new Int32Array(cap);
    this.tabLen = new Int32Array(cap);
    this.tabRow = new Int32Array(cap);
    for (let s = 0; s < oldCap; s++) {
      const l = tabLen[s];
      if (l === 0) continue;
      let slot = (tabA[s] ^ Math.imul(tabB[s], 0x9e3779b1)) & this.mask;
      while (this.tabLen[slot] !== 0) slot = (slot + 1) & this.mask;
      this.tabLen[slot] = l;
      this.tabA[slot] = tabA[s];
      this.tabB[slot] = tabB[s];
      this.tabRow[slot] = tabRow[s];
    }
    const rows = new Float64Array((cap >> 1) * FIT_SIZE);
    rows.set(this.rows);
    this.rows = rows;
  }

  cost(start: number, end: number): number {
    const r = this.row(start, end);
    this.lastRow = r;
    return this.rows[r * FIT_SIZE + FIT_COST];
  }

  /** Selects [start, end) for the accessors below. */
  select(start: number, end: number): this {
    this.lastRow = this.row(start, end);
    return this;
  }

  get selCost(): number { return this.rows[this.lastRow * FIT_SIZE + FIT_COST]; }
  get selScatterVar(): number { return this.rows[this.lastRow * FIT_SIZE + FIT_SCATTER_VAR]; }
  get selMeanQ(): number { return this.rows[this.lastRow * FIT_SIZE + FIT_MEAN_Q]; }
  get selMeanU(): number { return this.rows[this.lastRow * FIT_SIZE + FIT_MEAN_U]; }
  get selVarMeanQ(): number { return this.rows[this.lastRow * FIT_SIZE + FIT_VAR_MEAN_Q]; }
  get selVarMeanU(): number { return this.rows[this.lastRow * FIT_SIZE + FIT_VAR_MEAN_U]; }
}

const LN_2PI = Math.log(2 * Math.PI);

function nextPow2(x: number): number {
  let c = 1;
  while (c < x) c <<= 1;
  return c;
}

/** min(v, g) with g = La + slope·dt + max(x, 0), the bound's value at a crossing (v kept when g is NaN). */
function lowerOf(v: number, La: number, slope: number, dt: number, x: number): number {
  const g = La + slope * dt + (x > 0 ? x : 0);
  return g < v ? g : v;
}

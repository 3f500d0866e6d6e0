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
  FIT_VAR_MEAN_Q, FIT_VAR_MEAN_U,
} from './segmentCost';

/** Anything that can price a segment [start, end) of the current ordering. */
export interface SegmentCoster {
  cost(start: number, end: number): number;
  /**
   * Optional: cost of each star alone at each position (a lower bound per star, since costs are
   * superadditive); lets PELT skip exact costs that cannot matter.
   */
  readonly singletonCost?: Float64Array;
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

  /** Row index (into the fit store) of the fit of [start, end), computing it if new. */
  private row(start: number, end: number): number {
    const ka = this.prefA[end] ^ this.prefA[start];
    const kb = this.prefB[end] ^ this.prefB[start];
    const len = end - start;
    let slot = (ka ^ Math.imul(kb, 0x9e3779b1)) & this.mask;
    for (;;) {
      const l = this.tabLen[slot];
      if (l === 0) break;
      if (l === len && this.tabA[slot] === ka && this.tabB[slot] === kb) {
        this.hits++;
        return this.tabRow[slot];
      }
      slot = (slot + 1) & this.mask;
    }
    const r = this.nRows++;
    fitSegmentInto(this.q, this.u, this.vq, this.vu, start, end, this.rows, r * FIT_SIZE);
    this.misses++;
    this.tabLen[slot] = len;
    this.tabA[slot] = ka;
    this.tabB[slot] = kb;
    this.tabRow[slot] = r;
    if (2 * this.nRows > this.mask) this.grow();
    return r;
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

function nextPow2(x: number): number {
  let c = 1;
  while (c < x) c <<= 1;
  return c;
}

/**
 * Cost of one segment of stars that share a mean (q̄, ū) and an intrinsic scatter s ≥ 0.
 *
 * Model: q_i ~ N(q̄, σq_i² + s²), u_i ~ N(ū, σu_i² + s²), independent; the same s for q and u
 * (turbulence scatters both Stokes parameters alike). Cost = −2·max ln L over (q̄, ū, s).
 *
 * With t = s², for fixed t the means are the weighted means (w = 1/(σ² + t)) and the profile is
 *   f(t) = Σ ln(2π(σq_i² + t)) + Σ w_i (q_i − q̄)² + (same for u),
 *   f'(t) = Σ w_i − Σ w_i² r_i²                                   (envelope theorem),
 *   f''(t) = −Σ w_i² + 2 Σ w_i³ r_i² − 2 (Σ w_i² r_i)² / Σ w_i      (per Stokes parameter).
 * This is the maximum-likelihood random-effects problem of meta-analysis, whose profile can have
 * more than one local minimum when the σ_i differ (seen in about 1 % of random segments with
 * errors spread over a factor 30, t = 0 being a local minimum while a deeper interior one
 * exists). So the search is global: f is sampled on t = 0 and a √2-geometric grid from
 * min σ²/16 up to R², R = the larger of the q and u ranges — no stationary point lies beyond
 * R² because there every w_i r_i² < 1, so f' > 0 — and every grid minimum within 1 of the best
 * is polished by safeguarded Newton on f' (bisection when a step leaves the bracket). When all
 * variances in the segment are equal the profile is unimodal and the minimum is closed form:
 * σ² + t = (SS_q + SS_u)/(2m), t ≥ 0.
 */

const LN_2PI = Math.log(2 * Math.PI);
/** Grid ratio between successive t samples. */
const GRID_RATIO = Math.SQRT2;
/** Grid minima whose sampled cost is within this of the best sample are all polished. */
const POLISH_WINDOW = 1;
const MAX_GRID = 160;

/** Layout of a fit result vector. */
export const FIT_COST = 0;
export const FIT_SCATTER_VAR = 1;
export const FIT_MEAN_Q = 2;
export const FIT_MEAN_U = 3;
export const FIT_VAR_MEAN_Q = 4;
export const FIT_VAR_MEAN_U = 5;
export const FIT_SIZE = 6;

export interface SegmentFit {
  /** −2 max ln L. */
  cost: number;
  /** Intrinsic scatter s (fraction). */
  scatter: number;
  meanQ: number;
  meanU: number;
  /** Variance of the segment means: 1/Σ 1/(σ_i² + s²). */
  varMeanQ: number;
  varMeanU: number;
}

// Scratch for the grid (one segment at a time; the module is single-threaded per realm).
const gridT = new Float64Array(MAX_GRID + 2);
const gridF = new Float64Array(MAX_GRID + 2);

// Results of the last evaluate() call: f's first and second derivatives, the means and weights.
let evD1 = 0, evD2 = 0;
let evMeanQ = 0, evMeanU = 0;
let evWq = 0, evWu = 0;
// Arguments and value of the last evaluate() call, so a point is not evaluated twice in a row.
let lastQ: Float64Array | null = null;
let lastStart = -1;
let lastEnd = -1;
let lastT = NaN;
let lastF = NaN;

/**
 * f(t) without the 2m ln 2π constant; with derivs, also sets evD1 = f'(t), evD2 = f''(t).
 * Values are shifted by (q0, u0) — a star of the segment — to keep the sums well conditioned.
 * Leaves the weighted means (shifted) and Σw in evMeanQ/U, evWq/u.
 */
function evaluate(
  q: Float64Array, u: Float64Array, vq: Float64Array, vu: Float64Array,
  start: number, end: number, t: number, q0: number, u0: number, derivs: boolean,
): number {
  let wq = 0, sq = 0, sqq = 0, wu = 0, su = 0, suu = 0;
  let w2q = 0, s2q = 0, s2qq = 0, w3q = 0, s3q = 0, s3qq = 0;
  let w2u = 0, s2u = 0, s2uu = 0, w3u = 0, s3u = 0, s3uu = 0;
  // Σ ln(v + t) as logs of chunked products of ratios to a reference (one log per 8 stars).
  const ref = vq[start] + t;
  const invRef = 1 / ref;
  let logSum = 0;
  let prod = 1;
  let k = 0;
  for (let i = start; i < end; i++) {
    const aq = vq[i] + t;
    const au = vu[i] + t;
    const a = 1 / aq;
    const b = 1 / au;
    const x = q[i] - q0;
    const y = u[i] - u0;
    const ax = a * x;
    const by = b * y;
    wq += a; sq += ax; sqq += ax * x;
    wu += b; su += by; suu += by * y;
    if (derivs) {
      const a2 = a * a, b2 = b * b;
      w2q += a2; s2q += a2 * x; s2qq += a2 * x * x;
      w2u += b2; s2u += b2 * y; s2uu += b2 * y * y;
      const a3 = a2 * a, b3 = b2 * b;
      w3q += a3; s3q += a3 * x; s3qq += a3 * x * x;
      w3u += b3; s3u += b3 * y; s3uu += b3 * y * y;
    }
    prod *= aq * invRef * (au * invRef);
    if (++k === 8) {
      logSum += Math.log(prod);
      prod = 1;
      k = 0;
    }
  }
  if (k !== 0) logSum += Math.log(prod);
  const m2 = 2 * (end - start);
  const mq = sq / wq;
  const mu = su / wu;
  evMeanQ = mq; evMeanU = mu; evWq = wq; evWu = wu;
  const chi2 = (sqq - sq * mq) + (suu - su * mu);
  const f = logSum + m2 * Math.log(ref) + (chi2 > 0 ? chi2 : 0);
  lastQ = q; lastStart = start; lastEnd = end; lastT = t; lastF = f;
  if (derivs) {
    const w2r2q = s2qq - 2 * mq * s2q + mq * mq * w2q;
    const w2r2u = s2uu - 2 * mu * s2u + mu * mu * w2u;
    const w2rq = s2q - mq * w2q;
    const w2ru = s2u - mu * w2u;
    const w3r2q = s3qq - 2 * mq * s3q + mq * mq * w3q;
    const w3r2u = s3uu - 2 * mu * s3u + mu * mu * w3u;
    evD1 = wq - w2r2q + (wu - w2r2u);
    evD2 = -w2q + 2 * w3r2q - (2 * w2rq * w2rq) / wq + (-w2u + 2 * w3r2u - (2 * w2ru * w2ru) / wu);
  }
  return f;
}

/**
 * Local minimum of f in (lo, hi) from x0 by Newton on f', bisecting (geometrically when lo > 0)
 * whenever a step leaves the bracket; the bracket shrinks by the sign of f' at each iterate.
 * lo = x0 = 0 means the grid's best point is s = 0: a boundary minimum when f'(0) ≥ 0.
 */
function polish(
  q: Float64Array, u: Float64Array, vq: Float64Array, vu: Float64Array,
  start: number, end: number, q0: number, u0: number,
  lo: number, hi: number, x0: number, tScale: number,
): number {
  let x = x0;
  if (x0 === 0) {
    evaluate(q, u, vq, vu, start, end, 0, q0, u0, true);
    if (evD1 >= 0) return 0;
    x = 0.5 * hi;
  }
  for (let iter = 0; iter < 100; iter++) {
    evaluate(q, u, vq, vu, start, end, x, q0, u0, true);
    const g = evD1;
    const h = evD2;
    if (g === 0) return x;
    if (g < 0) lo = x; else hi = x;
    let next = h > 0 ? x - g / h : NaN;
    if (!(next > lo && next < hi)) next = lo > 0 ? Math.sqrt(lo * hi) : 0.5 * (lo + hi);
    const step = Math.abs(next - x);
    x = next;
    if (step <= 1e-10 * (x + tScale) || hi - lo <= 1e-12 * (hi + tScale)) break;
  }
  return x;
}

/**
 * Global minimum of f given its samples fT[0..g) (ascending t, fT[0] = 0) and values fF:
 * every sampled local minimum within POLISH_WINDOW of the best sample is polished; the lowest
 * result wins. Returns t.
 */
export function minimiseFromSamples(
  q: Float64Array, u: Float64Array, vq: Float64Array, vu: Float64Array,
  start: number, end: number, fT: Float64Array, fF: Float64Array, g: number, vMin: number,
): number {
  lastQ = null; // only this search's evaluations may be reused
  const q0 = q[start];
  const u0 = u[start];
  let best = 0;
  for (let k = 1; k < g; k++) if (fF[k] < fF[best]) best = k;
  const fBest = fF[best];
  let tBest = fT[best];
  let fFound = Infinity;
  for (let k = 0; k < g; k++) {
    const fk = fF[k];
    if (fk > fBest + POLISH_WINDOW) continue;
    const left = k === 0 ? Infinity : fF[k - 1];
    const right = k === g - 1 ? Infinity : fF[k + 1];
    if (!(fk <= left && fk <= right)) continue;
    let tk: number;
    if (g === 1) tk = 0;
    else if (k === 0) tk = polish(q, u, vq, vu, start, end, q0, u0, 0, fT[1], 0, vMin);
    else tk = polish(q, u, vq, vu, start, end, q0, u0, fT[k - 1], k === g - 1 ? fT[k] : fT[k + 1], fT[k], vMin);
    // The polish often ends on its last evaluated point (e.g. the boundary t = 0).
    const fk2 = lastQ === q && lastStart === start && lastEnd === end && lastT === tk
      ? lastF : evaluate(q, u, vq, vu, start, end, tk, q0, u0, false);
    const better = fk2 <= fk;
    const fUse = better ? fk2 : fk;
    if (fUse < fFound) { fFound = fUse; tBest = better ? tk : fT[k]; }
  }
  return tBest;
}

/** Segment statistics needed to choose the search: value ranges, extreme variances. */
let stVMin = 0;
let stTHi = 0;
let stEqualVar = false;

/** Scans [start, end): sets stVMin, stTHi = (larger of the q and u ranges)², stEqualVar. */
export function scanSegment(q: Float64Array, u: Float64Array, vq: Float64Array, vu: Float64Array, start: number, end: number): void {
  let qMin = q[start], qMax = qMin, uMin = u[start], uMax = uMin;
  let vMin = Math.min(vq[start], vu[start]);
  let vMax = Math.max(vq[start], vu[start]);
  for (let i = start + 1; i < end; i++) {
    const x = q[i], y = u[i];
    if (x < qMin) qMin = x; else if (x > qMax) qMax = x;
    if (y < uMin) uMin = y; else if (y > uMax) uMax = y;
    const a = vq[i], b = vu[i];
    if (a < vMin) vMin = a; if (a > vMax) vMax = a;
    if (b < vMin) vMin = b; if (b > vMax) vMax = b;
  }
  const range = Math.max(qMax - qMin, uMax - uMin);
  stVMin = vMin;
  stTHi = range * range;
  stEqualVar = vMax - vMin <= 1e-12 * vMax;
}
export function scannedVMin(): number { return stVMin; }
export function scannedTHi(): number { return stTHi; }
export function scannedEqualVariances(): boolean { return stEqualVar; }

/** Closed-form t for equal variances v: v + t = (SS_q + SS_u)/(2m), t ≥ 0. */
function equalVarianceT(q: Float64Array, u: Float64Array, start: number, end: number, v: number): number {
  const m = end - start;
  const q0 = q[start], u0 = u[start];
  let sq = 0, su = 0;
  for (let i = start; i < end; i++) { sq += q[i] - q0; su += u[i] - u0; }
  const mq = sq / m, mu = su / m;
  let ss = 0;
  for (let i = start; i < end; i++) {
    const dx = q[i] - q0 - mq, dy = u[i] - u0 - mu;
    ss += dx * dx + dy * dy;
  }
  const t = ss / (2 * m) - v;
  return t > 0 ? t : 0;
}

/**
 * Writes the fit at scatter variance t into out[offset…]. Called right after the search, whose
 * last evaluation is often at t already: then that evaluation's sums are used (same values).
 */
export function writeFitAt(
  q: Float64Array, u: Float64Array, vq: Float64Array, vu: Float64Array,
  start: number, end: number, t: number, out: Float64Array, offset: number,
): void {
  const q0 = q[start], u0 = u[start];
  const f = lastQ === q && lastStart === start && lastEnd === end && lastT === t
    ? lastF : evaluate(q, u, vq, vu, start, end, t, q0, u0, false);
  lastQ = null; // used once: the arrays may be refilled before the next fit
  out[offset + FIT_COST] = f + 2 * (end - start) * LN_2PI;
  out[offset + FIT_SCATTER_VAR] = t;
  out[offset + FIT_MEAN_Q] = q0 + evMeanQ;
  out[offset + FIT_MEAN_U] = u0 + evMeanU;
  out[offset + FIT_VAR_MEAN_Q] = 1 / evWq;
  out[offset + FIT_VAR_MEAN_U] = 1 / evWu;
}

/**
 * Fits stars [start, end) of the given arrays (q, u and their variances σ²) and writes
 * cost, s², q̄, ū, var q̄, var ū into out[offset .. offset+6). Allocation-free.
 */
export function fitSegmentInto(
  q: Float64Array, u: Float64Array, vq: Float64Array, vu: Float64Array,
  start: number, end: number, out: Float64Array, offset = 0,
): void {
  if (end - start <= 0) throw new RangeError(`segment [${start}, ${end}) is empty`);
  lastQ = null;
  scanSegment(q, u, vq, vu, start, end);
  let t = 0;
  if (stTHi > 0) {
    if (stEqualVar) t = equalVarianceT(q, u, start, end, stVMin);
    else {
      // Grid: 0, then vMin/16·√2^k below tHi, then tHi.
      const q0 = q[start], u0 = u[start];
      const tHi = stTHi;
      let g = 0;
      gridT[g++] = 0;
      let tk = stVMin / 16;
      while (tk < tHi && g < MAX_GRID) { gridT[g++] = tk; tk *= GRID_RATIO; }
      gridT[g++] = tHi;
      for (let k = 0; k < g; k++) gridF[k] = evaluate(q, u, vq, vu, start, end, gridT[k], q0, u0, false);
      t = minimiseFromSamples(q, u, vq, vu, start, end, gridT, gridF, g, stVMin);
    }
  }
  writeFitAt(q, u, vq, vu, start, end, t, out, offset);
}

/** Grid ratio and floor used by grids that callers build themselves (segmentTable.ts). */
export const SEGMENT_GRID_RATIO = GRID_RATIO;
export const SEGMENT_GRID_FLOOR_FRACTION = 1 / 16;
export const SEGMENT_GRID_MAX = MAX_GRID;

const scratch = new Float64Array(FIT_SIZE);

/** Convenience wrapper returning an object (tests, API); the fit loop uses fitSegmentInto. */
export function fitSegment(
  q: ArrayLike<number>, u: ArrayLike<number>, qErr: ArrayLike<number>, uErr: ArrayLike<number>,
): SegmentFit {
  const n = q.length;
  const fq = Float64Array.from(q), fu = Float64Array.from(u);
  const vq = new Float64Array(n), vu = new Float64Array(n);
  for (let i = 0; i < n; i++) { vq[i] = qErr[i] * qErr[i]; vu[i] = uErr[i] * uErr[i]; }
  fitSegmentInto(fq, fu, vq, vu, 0, n, scratch, 0);
  return {
    cost: scratch[FIT_COST],
    scatter: Math.sqrt(scratch[FIT_SCATTER_VAR]),
    meanQ: scratch[FIT_MEAN_Q],
    meanU: scratch[FIT_MEAN_U],
    varMeanQ: scratch[FIT_VAR_MEAN_Q],
    varMeanU: scratch[FIT_VAR_MEAN_U],
  };
}

/** −2 ln L of a segment at given (q̄, ū, s) — the objective itself, for checks. */
export function segmentNegTwoLogLikelihood(
  q: ArrayLike<number>, u: ArrayLike<number>, qErr: ArrayLike<number>, uErr: ArrayLike<number>,
  meanQ: number, meanU: number, scatter: number,
): number {
  let f = 0;
  const t = scatter * scatter;
  for (let i = 0; i < q.length; i++) {
    const a = qErr[i] * qErr[i] + t;
    const b = uErr[i] * uErr[i] + t;
    f += Math.log(2 * Math.PI * a) + ((q[i] - meanQ) ** 2) / a;
    f += Math.log(2 * Math.PI * b) + ((u[i] - meanU) ** 2) / b;
  }
  return f;
}

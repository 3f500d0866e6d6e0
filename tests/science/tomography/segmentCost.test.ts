import { describe, expect, it } from 'vitest';
import { mulberry32, gaussian, hashSeed } from '../../../server/science/random';
import { fitSegment, segmentNegTwoLogLikelihood } from '../../../server/science/tomography/segmentCost';
import { SegmentTable } from '../../../server/science/tomography/segmentTable';

/** Golden-section minimum of a 1-D function on [a, b] (independent of the module's code). */
function goldenMin(f: (x: number) => number, a: number, b: number, iters = 80): number {
  const r = (Math.sqrt(5) - 1) / 2;
  let c = b - r * (b - a), d = a + r * (b - a);
  let fc = f(c), fd = f(d);
  for (let i = 0; i < iters; i++) {
    if (fc < fd) { b = d; d = c; fd = fc; c = b - r * (b - a); fc = f(c); }
    else { a = c; c = d; fc = fd; d = a + r * (b - a); fd = f(d); }
  }
  return 0.5 * (a + b);
}

/**
 * Brute force: −2 max ln L over (q̄, ū, s) by numerical search only — for each s on a dense
 * log grid (and s = 0), q̄ and ū by golden section over the data range (no closed-form weighted
 * mean), then golden refinement of s around the best grid value.
 */
function bruteForce(q: number[], u: number[], qe: number[], ue: number[]): number {
  const lo = (xs: number[]) => Math.min(...xs) - 1e-6, hi = (xs: number[]) => Math.max(...xs) + 1e-6;
  const atS = (s: number): number => {
    const mq = goldenMin((m) => segmentNegTwoLogLikelihood(q, u, qe, ue, m, 0, s), lo(q), hi(q), 70);
    const mu = goldenMin((m) => segmentNegTwoLogLikelihood(q, u, qe, ue, mq, m, s), lo(u), hi(u), 70);
    return segmentNegTwoLogLikelihood(q, u, qe, ue, mq, mu, s);
  };
  let best = atS(0), bestLog = -Infinity;
  const G = 600;
  for (let j = 0; j <= G; j++) {
    const ls = Math.log(1e-6) + (j / G) * (Math.log(0.2) - Math.log(1e-6));
    const f = atS(Math.exp(ls));
    if (f < best) { best = f; bestLog = ls; }
  }
  if (bestLog > -Infinity) {
    const step = (Math.log(0.2) - Math.log(1e-6)) / G;
    const ls = goldenMin((x) => atS(Math.exp(x)), bestLog - step, bestLog + step, 60);
    best = Math.min(best, atS(Math.exp(ls)));
  }
  return best;
}

function randomSegment(seed: number) {
  const rng = mulberry32(hashSeed('segment-cost-test', seed));
  const m = 2 + Math.floor(rng() * 7);
  const scatter = rng() < 0.5 ? 0 : 0.02 * rng();
  const split = rng() < 0.3 ? Math.floor(rng() * m) : -1;
  const q: number[] = [], u: number[] = [], qe: number[] = [], ue: number[] = [];
  for (let i = 0; i < m; i++) {
    // errors spread over a factor 30, q and u errors unequal for half the stars
    const sq = 0.001 * Math.exp(rng() * Math.log(30));
    const su = rng() < 0.5 ? sq : sq * (0.5 + rng());
    const off = split >= 0 && i >= split ? 0.01 : 0;
    q.push(off + Math.sqrt(sq * sq + scatter * scatter) * gaussian(rng));
    u.push(Math.sqrt(su * su + scatter * scatter) * gaussian(rng));
    qe.push(sq); ue.push(su);
  }
  return { q, u, qe, ue };
}

describe('segment cost = −2 max ln L', () => {
  it('equals a brute-force numerical maximisation on small random segments', () => {
    let worst = 0;
    let interior = 0;
    const cases = 60;
    for (let k = 0; k < cases; k++) {
      const { q, u, qe, ue } = randomSegment(k);
      const fit = fitSegment(q, u, qe, ue);
      const brute = bruteForce(q, u, qe, ue);
      // The brute force only ever finds values ≥ the true minimum (it evaluates real points).
      expect(fit.cost).toBeLessThanOrEqual(brute + 1e-7);
      expect(brute - fit.cost).toBeLessThan(1e-5);
      worst = Math.max(worst, Math.abs(brute - fit.cost));
      if (fit.scatter > 0) interior++;
      // The reported parameters reproduce the reported cost.
      expect(segmentNegTwoLogLikelihood(q, u, qe, ue, fit.meanQ, fit.meanU, fit.scatter)).toBeCloseTo(fit.cost, 9);
    }
    console.log(`segment cost vs brute force: ${cases} cases, ${interior} with s > 0, worst |Δ| = ${worst.toExponential(2)}`);
    expect(interior).toBeGreaterThan(5);
  });

  it('finds the deeper interior optimum when s = 0 is only a local one', () => {
    // Found by scanning random segments: the profile in s has a local minimum at s = 0
    // (f'(0) > 0) and a deeper one inside; a search started at s = 0 stops at the wrong one.
    let found = 0;
    for (let k = 0; k < 4000 && found < 5; k++) {
      const { q, u, qe, ue } = randomSegment(10_000 + k);
      const prof = (s: number) => {
        const t = s * s;
        let wq = 0, sq = 0, wu = 0, su = 0;
        for (let i = 0; i < q.length; i++) {
          const a = 1 / (qe[i] ** 2 + t), b = 1 / (ue[i] ** 2 + t);
          wq += a; sq += a * q[i]; wu += b; su += b * u[i];
        }
        return segmentNegTwoLogLikelihood(q, u, qe, ue, sq / wq, su / wu, s);
      };
      const f0 = prof(0);
      const tiny = prof(1e-5);
      if (!(tiny > f0)) continue; // s = 0 must be a local minimum
      const fit = fitSegment(q, u, qe, ue);
      if (fit.cost < f0 - 0.5) {
        found++;
        expect(fit.scatter).toBeGreaterThan(0);
        expect(Math.abs(bruteForce(q, u, qe, ue) - fit.cost)).toBeLessThan(1e-5);
      }
    }
    expect(found).toBe(5);
  });

  it('uses the closed form for equal errors: σ² + s² = (SS_q + SS_u)/(2m)', () => {
    const q = [0.010, 0.014, 0.006, 0.012, 0.009];
    const u = [0.002, -0.003, 0.001, 0.004, -0.002];
    const e = [0.001, 0.001, 0.001, 0.001, 0.001];
    const fit = fitSegment(q, u, e, e);
    const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
    const ss = q.reduce((a, x) => a + (x - mean(q)) ** 2, 0) + u.reduce((a, x) => a + (x - mean(u)) ** 2, 0);
    expect(fit.scatter ** 2 + 1e-6).toBeCloseTo(ss / 10, 12);
    expect(fit.meanQ).toBeCloseTo(mean(q), 14);
    expect(Math.abs(bruteForce(q, u, e, e) - fit.cost)).toBeLessThan(1e-5);
  });

  it('gives s = 0 and inverse-variance means when the data scatter less than their errors', () => {
    const q = [0.0100, 0.0101, 0.0099];
    const u = [0.0050, 0.0051, 0.0049];
    const qe = [0.001, 0.002, 0.003];
    const fit = fitSegment(q, u, qe, qe);
    expect(fit.scatter).toBe(0);
    const w = qe.map((s) => 1 / (s * s));
    const wq = w.reduce((a, x, i) => a + x * q[i], 0) / w.reduce((a, b) => a + b, 0);
    expect(fit.meanQ).toBeCloseTo(wq, 15);
    expect(fit.varMeanQ).toBeCloseTo(1 / w.reduce((a, b) => a + b, 0), 15);
  });

  it('long segments (prefix-sum grid path) agree with the direct search', () => {
    const rng = mulberry32(hashSeed('long-segments'));
    const n = 60;
    const q: number[] = [], u: number[] = [], qe: number[] = [], ue: number[] = [];
    for (let i = 0; i < n; i++) {
      const s = 0.001 * Math.exp(rng() * Math.log(10));
      const level = i < 25 ? 0 : i < 40 ? 0.012 : 0.02;
      q.push(level + (s + 0.002 * (i % 3)) * gaussian(rng));
      u.push(0.5 * level + s * gaussian(rng));
      qe.push(s); ue.push(s * 1.2);
    }
    const table = new SegmentTable(q, u, qe, ue, 1);
    const order = Array.from({ length: n }, (_, i) => i);
    table.setOrder(order);
    let checked = 0;
    for (const [a, b] of [[0, 60], [0, 30], [10, 55], [20, 45], [3, 17], [30, 60], [0, 12]]) {
      // force the prefix path: first exhaust the direct-work allowance on other long segments
      for (let k = 0; k < 12; k++) table.cost(k, k + 40 < n ? k + 40 : n);
      const viaTable = table.select(a, b);
      const direct = fitSegment(q.slice(a, b), u.slice(a, b), qe.slice(a, b), ue.slice(a, b));
      expect(viaTable.selCost).toBeCloseTo(direct.cost, 8);
      expect(Math.sqrt(viaTable.selScatterVar)).toBeCloseTo(direct.scatter, 8);
      expect(viaTable.selMeanQ).toBeCloseTo(direct.meanQ, 12);
      checked++;
    }
    expect(checked).toBe(7);
  });
});

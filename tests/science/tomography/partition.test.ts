import { describe, expect, it } from 'vitest';
import { mulberry32, gaussian, hashSeed } from '../../../server/science/random';
import { SegmentTable, type SegmentCoster } from '../../../server/science/tomography/segmentTable';
import { exhaustivePartition, peltPartition, PeltSolver } from '../../../server/science/tomography/partition';

function randomCell(seed: number, n: number) {
  const rng = mulberry32(hashSeed('partition-test', seed));
  const q: number[] = [], u: number[] = [], qe: number[] = [], ue: number[] = [];
  // 0–3 true changes, random amplitudes around the noise level so decisions are close calls
  const nChanges = Math.floor(rng() * 4);
  const at = Array.from({ length: nChanges }, () => Math.floor(rng() * n)).sort((a, b) => a - b);
  const scatter = rng() < 0.5 ? 0 : 0.003 * rng();
  for (let i = 0; i < n; i++) {
    let level = 0, levelU = 0;
    for (const c of at) if (i >= c) { level += 0.006 * gaussian(rng); levelU += 0.006 * gaussian(rng); }
    const s = 0.001 * Math.exp(rng() * Math.log(5));
    q.push(level + Math.sqrt(s * s + scatter * scatter) * gaussian(rng));
    u.push(levelU + Math.sqrt(s * s + scatter * scatter) * gaussian(rng));
    qe.push(s); ue.push(s * (0.8 + 0.4 * rng()));
  }
  return { q, u, qe, ue, rng };
}

/** The same costs without the singleton lower bounds, so PELT prices every candidate exactly. */
class PlainCoster implements SegmentCoster {
  constructor(private readonly inner: SegmentTable) {}
  cost(a: number, b: number): number { return this.inner.cost(a, b); }
}

describe('PELT equals exhaustive optimal partitioning', () => {
  it('on random inputs up to n = 12 (many seeds, several minimum lengths and penalties)', () => {
    let cases = 0, withBreaks = 0, prunedSomething = 0;
    for (let seed = 0; seed < 400; seed++) {
      const n = 2 + (seed % 11); // 2..12
      const { q, u, qe, ue, rng } = randomCell(seed, n);
      const table = new SegmentTable(q, u, qe, ue, seed);
      const order = Array.from({ length: n }, (_, i) => i);
      // shuffle sometimes: the coster works on any ordering
      if (seed % 3 === 0) for (let i = n - 1; i > 0; i--) { const j = Math.floor(rng() * (i + 1)); [order[i], order[j]] = [order[j], order[i]]; }
      table.setOrder(order);
      const minSeg = 1 + (seed % 3);
      const penalty = [0.5, 4 * Math.log(n), 20][seed % 3 === 1 ? 0 : seed % 2 === 0 ? 1 : 2];
      const ex = exhaustivePartition(n, minSeg, penalty, table);
      for (const coster of [table, new PlainCoster(table)]) {
        const solver = new PeltSolver(2);
        const breaks: number[] = [];
        const total = solver.solve(n, minSeg, penalty, coster, breaks);
        expect(breaks).toEqual(ex.breaks);
        expect(total).toBeCloseTo(ex.totalCost, 9);
        if (coster instanceof PlainCoster && n >= 2 * minSeg) {
          // Without pruning, optimal partitioning prices every legal (τ, t) pair once.
          let pairs = 0;
          for (let t = minSeg; t <= n; t++) for (let c = 0; c <= t - minSeg; c++) if (c === 0 || c >= minSeg) pairs++;
          if (solver.evaluations < pairs) prunedSomething++;
        }
      }
      cases++;
      if (ex.breaks.length > 0) withBreaks++;
    }
    console.log(`PELT vs exhaustive: ${cases} random cells (n = 2–12) identical; ${withBreaks} with breaks, PELT pruning saved exact costs in ${prunedSomething}`);
    expect(withBreaks).toBeGreaterThan(100);
    expect(prunedSomething).toBeGreaterThan(20);
  });

  it('a clear single change is found at the right place', () => {
    const q = [0, 0, 0, 0, 0, 0.02, 0.02, 0.02, 0.02, 0.02].map((x, i) => x + 0.0005 * Math.sin(7 * i));
    const u = q.map((x, i) => 0.5 * x + 0.0005 * Math.cos(5 * i));
    const e = q.map(() => 0.001);
    const table = new SegmentTable(q, u, e, e);
    table.setOrder(q.map((_, i) => i));
    expect(peltPartition(10, 3, 4 * Math.log(10), table).breaks).toEqual([5]);
    expect(exhaustivePartition(10, 3, 4 * Math.log(10), table).breaks).toEqual([5]);
  });

  it('costs are superadditive, the property PELT pruning needs (C(a..b) + C(b..c) ≤ C(a..c))', () => {
    let checked = 0;
    for (let seed = 0; seed < 40; seed++) {
      const n = 12;
      const { q, u, qe, ue } = randomCell(1000 + seed, n);
      const table = new SegmentTable(q, u, qe, ue);
      table.setOrder(Array.from({ length: n }, (_, i) => i));
      for (let a = 0; a < n; a++) for (let b = a + 1; b < n; b++) for (let c = b + 1; c <= n; c++) {
        expect(table.cost(a, b) + table.cost(b, c)).toBeLessThanOrEqual(table.cost(a, c) + 1e-9);
        checked++;
      }
    }
    expect(checked).toBe(40 * 286); // triples a < b < c from 13 boundaries
  });
});

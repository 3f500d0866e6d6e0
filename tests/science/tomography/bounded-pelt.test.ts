// The bounded PELT used for cells of 48+ stars (lower/upper segment-cost bounds, lazy steps) must
// give exactly the segmentation and total cost of optimal partitioning without any pruning
// (the optimal-partitioning recursion PELT prunes, Jackson et al. 2005 — citation from memory;
// Killick, Fearnhead & Eckley 2012).
import { describe, expect, it } from 'vitest';
import { gaussian, hashSeed, mulberry32 } from '../../../server/science/random.js';
import { SegmentTable, type SegmentCoster } from '../../../server/science/tomography/segmentTable.js';
import { PeltSolver } from '../../../server/science/tomography/partition.js';

/** Plain optimal partitioning: F(t) = min over τ of F(τ) + C(τ, t) + penalty, no pruning, no bounds. */
function fullOptimalPartitioning(n: number, minSeg: number, pen: number, c: SegmentCoster) {
  const F = new Float64Array(n + 1);
  const last = new Int32Array(n + 1);
  F[0] = -pen;
  for (let t = minSeg; t <= n; t++) {
    let best = Infinity;
    let arg = -1;
    for (let tau = 0; tau <= t - minSeg; tau++) {
      if (tau !== 0 && tau < minSeg) continue;
      const v = F[tau] + c.cost(tau, t) + pen;
      if (v < best) {
        best = v;
        arg = tau;
      }
    }
    F[t] = best;
    last[t] = arg;
  }
  const breaks: number[] = [];
  for (let t = n; t > 0; t = last[t]) if (last[t] > 0) breaks.push(last[t]);
  return { breaks: breaks.reverse(), total: F[n] };
}

describe('bounded PELT on large cells', () => {
  it('equals unpruned optimal partitioning on 120 random cells of 48–147 stars', () => {
    let withBreaks = 0;
    const mismatches: number[] = [];
    for (let seed = 0; seed < 120; seed++) {
      const rng = mulberry32(hashSeed('pelt-big', seed));
      const n = 48 + Math.floor(rng() * 100);
      const changes = Array.from({ length: Math.floor(rng() * 5) }, () => Math.floor(rng() * n)).sort((a, b) => a - b);
      const scatter = rng() < 0.5 ? 0 : 0.004 * rng();
      const q: number[] = [], u: number[] = [], qe: number[] = [], ue: number[] = [];
      for (let i = 0; i < n; i++) {
        let lq = 0, lu = 0;
        for (const c of changes) if (i >= c) { lq += 0.004 * gaussian(rng); lu += 0.004 * gaussian(rng); }
        const s = 0.001 * Math.exp(rng() * Math.log(rng() < 0.5 ? 3 : 30));
        q.push(lq + Math.hypot(s, scatter) * gaussian(rng));
        u.push(lu + Math.hypot(s, scatter) * gaussian(rng));
        qe.push(s);
        ue.push(s * (rng() < 0.5 ? 1 : 0.7 + 0.6 * rng()));
      }
      const minSeg = 1 + (seed % 4);
      const pen = [4 * Math.log(n), 2, 30][seed % 3];
      const table = new SegmentTable(q, u, qe, ue, seed);
      table.setOrder(Array.from({ length: n }, (_, i) => i));
      const ref = fullOptimalPartitioning(n, minSeg, pen, { cost: (a, b) => table.cost(a, b) } as SegmentCoster);
      const breaks: number[] = [];
      const total = new PeltSolver(4).solve(n, minSeg, pen, table, breaks);
      if (ref.breaks.length) withBreaks++;
      if (JSON.stringify(breaks) !== JSON.stringify(ref.breaks) || Math.abs(total - ref.total) > 1e-9 * Math.abs(ref.total)) mismatches.push(seed);
    }
    console.log(`bounded PELT vs unpruned optimal partitioning: 120 cells, ${withBreaks} with breaks, ${mismatches.length} mismatches`);
    expect(withBreaks).toBeGreaterThan(40);
    expect(mismatches).toEqual([]);
  });
});

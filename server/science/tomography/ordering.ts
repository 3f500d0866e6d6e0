/**
 * What the classic fit (fit.ts) and the survey fit (fitSurvey.ts) share: a cell's stars in
 * canonical order with the permutation that sorts them by distance, the PELT + blend
 * segmentation of one ordering, the foreground χ², the segments of a segmentation and the refit
 * per Monte Carlo distance draw.
 */
import { mulberry32, hashSeed } from '../random';
import { SegmentTable } from './segmentTable';
import { PeltSolver } from './partition';
import { mergeBlends } from './blend';
import { makeStarDistanceSampler, distanceSigmaPc } from './distanceDraws';
import type { ResolvedFitOptions } from './fit';
import type { TomographySegment, TomographyStar } from './types';

/** Sort positions by key (ties by canonical index), starting from a nearly sorted permutation. */
export function insertionSortBy(perm: Int32Array, key: Float64Array): void {
  for (let i = 1; i < perm.length; i++) {
    const p = perm[i];
    const k = key[p];
    let j = i - 1;
    while (j >= 0 && (key[perm[j]] > k || (key[perm[j]] === k && perm[j] > p))) {
      perm[j + 1] = perm[j];
      j--;
    }
    perm[j + 1] = p;
  }
}

/** The distances and their errors of one ordering, position by position (a fitter's arrays). */
export interface OrderedDistances {
  readonly dist: Float64Array;
  readonly sigma: Float64Array;
}

/**
 * A cell's stars in canonical order (the caller sorts them by id): the segment table over their
 * (q, u), the catalogue distances and the permutation `perm` that orders them by a distance.
 */
export class CellOrdering {
  readonly n: number;
  readonly table: SegmentTable;
  readonly nominalDist: Float64Array;
  readonly perm: Int32Array;
  private readonly sigma: Float64Array;

  constructor(readonly canon: TomographyStar[], cellId: string) {
    const n = (this.n = canon.length);
    this.table = new SegmentTable(
      canon.map((s) => s.q), canon.map((s) => s.u), canon.map((s) => s.qErr), canon.map((s) => s.uErr),
      hashSeed(cellId, 'keys'),
    );
    this.sigma = Float64Array.from(canon, distanceSigmaPc);
    this.nominalDist = Float64Array.from(canon, (s) => s.distancePc);
    this.perm = new Int32Array(n);
    for (let i = 0; i < n; i++) this.perm[i] = i;
  }

  /** Puts the table and `into` in the order of perm, with these distances. */
  apply(dist: Float64Array, into: OrderedDistances): void {
    this.table.setOrder(this.perm);
    for (let pos = 0; pos < this.n; pos++) {
      into.dist[pos] = dist[this.perm[pos]];
      into.sigma[pos] = this.sigma[this.perm[pos]];
    }
  }

  /** Sorts perm by these distances, then apply. */
  sortBy(dist: Float64Array, into: OrderedDistances): void {
    insertionSortBy(this.perm, dist);
    this.apply(dist, into);
  }
}

/** Segments one ordering with PELT, then merges blends (blend.ts). Reuses its buffers. */
export class OrderingFitter implements OrderedDistances {
  readonly dist: Float64Array;
  readonly sigma: Float64Array;
  readonly bounds: number[] = [];
  private readonly breaks: number[] = [];
  private readonly solver: PeltSolver;
  blendsMerged = 0;

  constructor(
    readonly table: SegmentTable,
    protected readonly opt: ResolvedFitOptions,
    protected readonly penalty: number,
  ) {
    this.dist = new Float64Array(table.n);
    this.sigma = new Float64Array(table.n);
    this.solver = new PeltSolver(table.n);
  }

  /** Segments the table's current ordering (dist and sigma already filled). */
  run(): void {
    const n = this.table.n;
    this.solver.solve(n, this.opt.minSegmentLength, this.penalty, this.table, this.breaks);
    const b = this.bounds;
    b.length = 0;
    b.push(0);
    for (const x of this.breaks) b.push(x);
    b.push(n);
    this.blendsMerged = mergeBlends(this.table, b, this.dist, this.sigma, this.opt);
  }

  layerCount(clear: boolean): number {
    return this.bounds.length - 2 + (clear ? 0 : 1);
  }

  /**
   * χ² of the nearest segment against zero polarization, (q̄/σ_q̄)² + (ū/σ_ū)². Only its stars
   * securely in front of the first break enter — d_i + 2σ_i below the break position — because
   * stars from behind the cloud that sort in front through distance errors would otherwise make
   * a clear foreground look polarized (all of them when none is secure).
   */
  foregroundChi2(): number {
    const table = this.table;
    const end = this.bounds[1];
    const t = table.select(0, end);
    const s2 = t.selScatterVar;
    const edge = end < table.n ? 0.5 * (this.dist[end - 1] + this.dist[end]) : Infinity;
    let wq = 0, sq = 0, wu = 0, su = 0, used = 0;
    for (let pass = 0; pass < 2 && used === 0; pass++) {
      for (let i = 0; i < end; i++) {
        if (pass === 0 && !(this.dist[i] + 2 * this.sigma[i] < edge)) continue;
        const a = 1 / (table.vq[i] + s2), b = 1 / (table.vu[i] + s2);
        wq += a; sq += a * table.q[i]; wu += b; su += b * table.u[i];
        used++;
      }
    }
    return (sq * sq) / wq + (su * su) / wu;
  }
}

/** The segments [bounds[j], bounds[j+1]) of the table's current ordering, with their fitted means. */
export function segmentsOf(table: SegmentTable, bounds: number[], dist: Float64Array): TomographySegment[] {
  const segments: TomographySegment[] = [];
  for (let j = 0; j < bounds.length - 1; j++) {
    const start = bounds[j], end = bounds[j + 1];
    const t = table.select(start, end);
    segments.push({
      start, end,
      nearestPc: dist[start], farthestPc: dist[end - 1],
      meanQ: t.selMeanQ, meanU: t.selMeanU,
      meanQErr: Math.sqrt(t.selVarMeanQ), meanUErr: Math.sqrt(t.selVarMeanU),
      scatter: Math.sqrt(t.selScatterVar), cost: t.selCost,
    });
  }
  return segments;
}

/**
 * Refits the cell once per Monte Carlo distance draw (each draw's random stream depends only on
 * the cell id and the draw number) and tallies the layer count of each in `hist`. Yields after
 * each fit, while `fitter` holds that draw's segmentation.
 */
export function* drawFits<F extends OrderingFitter & { clearForeground(): boolean }>(
  ordering: CellOrdering,
  fitter: F,
  opt: ResolvedFitOptions,
  hist: number[],
): Generator<{ draw: number; rng: () => number; clear: boolean; count: number }> {
  const samplers = ordering.canon.map(makeStarDistanceSampler);
  const drawDist = new Float64Array(ordering.n);
  for (let d = 0; d < opt.draws; d++) {
    const rng = mulberry32(hashSeed(opt.cellId, d));
    for (let i = 0; i < ordering.n; i++) drawDist[i] = samplers[i](rng);
    ordering.sortBy(drawDist, fitter);
    fitter.run();
    const clear = fitter.clearForeground();
    const count = fitter.layerCount(clear);
    while (hist.length <= count) hist.push(0);
    hist[count]++;
    yield { draw: d, rng, clear, count };
  }
}

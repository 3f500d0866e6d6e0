/**
 * Sightline tomography: cloud layers along one cell's sightline (METHODS.md, "Tomography").
 *
 * This file holds the option handling and the earlier fit, method 'classic' (kept callable as the
 * baseline of bench/recovery.ts); the default method 'survey' is in fitSurvey.ts and reuses the
 * same parts (segment cost, PELT, blend merging, distance draws). The notes below describe the
 * classic fit.
 *
 * Choices, each where METHODS.md leaves one open:
 * - Penalty: BIC (Schwarz 1978) counting every parameter a break adds — its position, q̄, ū and
 *   s — so 4·ln(n) per break with n the number of stars: each star is one observation, a
 *   (q, u) vector, as in multivariate BIC.
 * - Segmentation: PELT (partition.ts) with a minimum segment length (default 3), then blend
 *   merging (blend.ts).
 * - Foreground: the nearest segment is "in front of every cloud" only if its mean is consistent
 *   with zero under the same BIC rule as the rest of the fit: a free mean there costs 2 more
 *   parameters (q̄, ū), so it is taken as polarized only when χ² = q̄²/var q̄ + ū²/var ū (the
 *   gain in −2 ln L at the fitted scatter) exceeds 2·ln(n). (A fixed 5 % test would add a
 *   spurious foreground layer to one field in twenty.) The test uses the segment's stars lying
 *   more than 2σ (distance) in front of the first break, so that stars from behind the cloud
 *   sorted in front by distance errors do not fake a polarized foreground. Then every break is a layer and layer 0 is the first break (the near edge of the first
 *   cloud). Otherwise the nearest stars are already polarized: the first cloud lies in front of
 *   the nearest star, and it is reported as a layer of kind 'foreground' with ΔS = S̄_0 − 0,
 *   distanceLoPc = 0 (unconstrained from below) and distancePc / distanceHiPc = median / 84th
 *   percentile of the nearest star's distance over the draws — an upper limit.
 * - Layer contribution ΔS_k = S̄_k − S̄_{k−1} (the segment means on both sides of its break),
 *   var = var S̄_k + var S̄_{k−1}, var S̄ = 1/Σ 1/(σ_i² + s²) (scatter included). p is debiased
 *   with the modified asymptotic estimator (Plaszczynski et al. 2014) using the isotropic
 *   b = sqrt((σΔq² + σΔu²)/2); snr = p_debiased/σp.
 * - Reported structure: the nominal fit at the catalogue distances gives the number and kind of
 *   layers and their Stokes contributions. The Monte Carlo refits on D distance draws (rng of
 *   draw d = mulberry32(hashSeed(cellId, d)), stars drawn in id order, so results do not depend
 *   on input order or thread scheduling); layerCountSupport = share of draws with the same number
 *   of layers. Layer distances are the median and 16th/84th percentiles (linear interpolation
 *   between order statistics) of the position of the k-th layer over the draws that have the
 *   same number of layers. A break's position in a draw lies between the last star before and
 *   the first star after it, in that draw's distances: by default a uniform point between the
 *   two (drawn from the draw's stream), because the edge can be anywhere in that gap — the
 *   midpoint (option breakPosition: 'midpoint') gives ranges that leave this out and cover the
 *   true distance about 48 % of the time instead of 68 % in the coverage test. With draws = 0,
 *   or when no draw matches, the nominal positions are reported with a zero-width range
 *   (nominal positions are midpoints).
 * - Jumps are between successive layers. "Complex" needs two successive layers among those with
 *   snr ≥ minLayerSnr (weaker layers between them are skipped, their angles being noise) whose
 *   angles differ by more than jumpThresholdDeg; that implies ≥ 2 layers with snr ≥ minLayerSnr.
 */

import { mulberry32, hashSeed } from '../random';
import { layerContribution } from './contribution';
import { angleDifferenceDeg } from '../axial';
import { SegmentTable } from './segmentTable';
import { PeltSolver } from './partition';
import { mergeBlends } from './blend';
import { makeStarDistanceSampler, distanceSigmaPc } from './distanceDraws';
import { fitSightlineSurvey } from './fitSurvey';
import type {
  FitOptions, SightlineResult, TomographyJump, TomographyLayer, TomographySegment, TomographyStar,
} from './types';

export interface ResolvedFitOptions {
  method: 'survey' | 'classic';
  placeMinParallaxSnr: number;
  stepFamilyAlpha: number;
  draws: number;
  minSegmentLength: number;
  jumpThresholdDeg: number;
  minLayerSnr: number;
  cellId: string;
  penaltyParamsPerBreak: number;
  blendSpanSigma: number;
  blendAlpha: number;
  foregroundPenaltyParams: number;
  breakPosition: 'uniform' | 'midpoint';
}

/** Defaults. jumpThresholdDeg = 30 is a user setting, not a value from a source. */
export const DEFAULT_FIT_OPTIONS: Readonly<Omit<ResolvedFitOptions, 'cellId'>> = {
  method: 'survey',
  placeMinParallaxSnr: 5,
  stepFamilyAlpha: 0.01,
  draws: 100,
  minSegmentLength: 3,
  jumpThresholdDeg: 30,
  minLayerSnr: 3,
  penaltyParamsPerBreak: 4,
  blendSpanSigma: 3,
  blendAlpha: 0.05,
  foregroundPenaltyParams: 2,
  breakPosition: 'uniform',
};

export function resolveFitOptions(o: FitOptions = {}): ResolvedFitOptions {
  const r: ResolvedFitOptions = {
    method: o.method ?? DEFAULT_FIT_OPTIONS.method,
    placeMinParallaxSnr: o.placeMinParallaxSnr ?? DEFAULT_FIT_OPTIONS.placeMinParallaxSnr,
    stepFamilyAlpha: o.stepFamilyAlpha ?? DEFAULT_FIT_OPTIONS.stepFamilyAlpha,
    draws: o.draws ?? DEFAULT_FIT_OPTIONS.draws,
    minSegmentLength: o.minSegmentLength ?? DEFAULT_FIT_OPTIONS.minSegmentLength,
    jumpThresholdDeg: o.jumpThresholdDeg ?? DEFAULT_FIT_OPTIONS.jumpThresholdDeg,
    minLayerSnr: o.minLayerSnr ?? DEFAULT_FIT_OPTIONS.minLayerSnr,
    cellId: o.cellId ?? (o.seed !== undefined ? String(o.seed) : 'cell'),
    penaltyParamsPerBreak: o.penaltyParamsPerBreak ?? DEFAULT_FIT_OPTIONS.penaltyParamsPerBreak,
    blendSpanSigma: o.blendSpanSigma ?? DEFAULT_FIT_OPTIONS.blendSpanSigma,
    blendAlpha: o.blendAlpha ?? DEFAULT_FIT_OPTIONS.blendAlpha,
    foregroundPenaltyParams: o.foregroundPenaltyParams ?? DEFAULT_FIT_OPTIONS.foregroundPenaltyParams,
    breakPosition: o.breakPosition ?? DEFAULT_FIT_OPTIONS.breakPosition,
  };
  if (r.method !== 'survey' && r.method !== 'classic') {
    throw new RangeError(`tomography option method = ${String(r.method)}: expected 'survey' or 'classic'`);
  }
  if (r.breakPosition !== 'uniform' && r.breakPosition !== 'midpoint') {
    throw new RangeError(`tomography option breakPosition = ${String(r.breakPosition)}: expected 'uniform' or 'midpoint'`);
  }
  const check = (name: string, v: number, ok: boolean, expected: string): void => {
    if (!ok) throw new RangeError(`tomography option ${name} = ${v}: expected ${expected}`);
  };
  check('draws', r.draws, Number.isInteger(r.draws) && r.draws >= 0, 'an integer ≥ 0');
  check('minSegmentLength', r.minSegmentLength, Number.isInteger(r.minSegmentLength) && r.minSegmentLength >= 1, 'an integer ≥ 1');
  check('jumpThresholdDeg', r.jumpThresholdDeg, r.jumpThresholdDeg >= 0 && r.jumpThresholdDeg <= 90, 'a number in [0, 90]');
  check('minLayerSnr', r.minLayerSnr, r.minLayerSnr >= 0, 'a number ≥ 0');
  check('penaltyParamsPerBreak', r.penaltyParamsPerBreak, r.penaltyParamsPerBreak >= 0, 'a number ≥ 0');
  check('blendSpanSigma', r.blendSpanSigma, r.blendSpanSigma >= 0, 'a number ≥ 0');
  check('blendAlpha', r.blendAlpha, r.blendAlpha > 0 && r.blendAlpha < 1, 'a number in (0, 1)');
  check('foregroundPenaltyParams', r.foregroundPenaltyParams, r.foregroundPenaltyParams >= 0, 'a number ≥ 0');
  check('placeMinParallaxSnr', r.placeMinParallaxSnr, r.placeMinParallaxSnr >= 0, 'a number ≥ 0');
  check('stepFamilyAlpha', r.stepFamilyAlpha, r.stepFamilyAlpha > 0 && r.stepFamilyAlpha < 1, 'a number in (0, 1)');
  return r;
}

export function validateStars(stars: TomographyStar[]): void {
  const seen = new Set<string>();
  for (const s of stars) {
    const bad = (field: string, value: unknown, expected: string): never => {
      throw new RangeError(`tomography star ${JSON.stringify(s.id)}: ${field} = ${String(value)}; expected ${expected}`);
    };
    if (typeof s.id !== 'string') bad('id', s.id, 'a string');
    if (seen.has(s.id)) bad('id', s.id, 'ids unique within the cell');
    seen.add(s.id);
    if (!(s.distancePc > 0) || !Number.isFinite(s.distancePc)) bad('distancePc', s.distancePc, 'a finite number > 0');
    if (!(s.distanceLoPc >= 0) || !Number.isFinite(s.distanceLoPc)) bad('distanceLoPc', s.distanceLoPc, 'a finite number ≥ 0');
    if (!Number.isFinite(s.distanceHiPc) || s.distanceHiPc < s.distanceLoPc) bad('distanceHiPc', s.distanceHiPc, `a finite number ≥ distanceLoPc (${s.distanceLoPc})`);
    if (!Number.isFinite(s.q)) bad('q', s.q, 'a finite fraction');
    if (!Number.isFinite(s.u)) bad('u', s.u, 'a finite fraction');
    if (!(s.qErr > 0) || !Number.isFinite(s.qErr)) bad('qErr', s.qErr, 'a finite number > 0');
    if (!(s.uErr > 0) || !Number.isFinite(s.uErr)) bad('uErr', s.uErr, 'a finite number > 0');
  }
}

/** Percentile of sorted values, linear interpolation between order statistics. */
export function percentileSorted(sorted: ArrayLike<number>, prob: number): number {
  const n = sorted.length;
  if (n === 0) return NaN;
  const h = (n - 1) * prob;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

/** Fits one ordering of a cell: PELT, then blend merging. Reuses its buffers. */
class OrderingFitter {
  readonly dist: Float64Array;
  readonly sigma: Float64Array;
  readonly bounds: number[] = [];
  private readonly breaks: number[] = [];
  private readonly solver: PeltSolver;
  blendsMerged = 0;

  constructor(
    readonly table: SegmentTable,
    private readonly opt: ResolvedFitOptions,
    private readonly penalty: number,
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

  /**
   * Whether the nearest segment is consistent with zero polarization. Only its stars securely in
   * front of the first break enter the test — d_i + 2σ_i below the break position — because
   * stars from behind the cloud that sort in front through distance errors would otherwise make
   * a clear foreground look polarized (all of them when none is secure).
   */
  clearForeground(): boolean {
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
    const chi2 = (sq * sq) / wq + (su * su) / wu; // (q̄/σ_q̄)² + (ū/σ_ū)²
    return chi2 <= this.opt.foregroundPenaltyParams * Math.log(table.n);
  }

  layerCount(clear: boolean): number {
    return this.bounds.length - 2 + (clear ? 0 : 1);
  }

  /**
   * Layer positions of this ordering into out[offset…]: midpoint of the two stars straddling a
   * break, or (with rng) a uniform point between them.
   */
  positions(clear: boolean, out: Float64Array, offset: number, rng?: () => number): void {
    let k = offset;
    if (!clear) out[k++] = this.dist[0];
    for (let j = 1; j < this.bounds.length - 1; j++) {
      const c = this.bounds[j];
      const f = rng ? rng() : 0.5;
      out[k++] = this.dist[c - 1] + f * (this.dist[c] - this.dist[c - 1]);
    }
  }

  totalCost(): number {
    let total = 0;
    for (let j = 0; j < this.bounds.length - 1; j++) total += this.table.cost(this.bounds[j], this.bounds[j + 1]);
    return total + this.penalty * (this.bounds.length - 2);
  }
}

/** Sort positions by key (ties by canonical index), starting from a nearly sorted permutation. */
function insertionSortBy(perm: Int32Array, key: Float64Array): void {
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

export function emptyResult(cellId: string, draws: number, method: 'survey' | 'classic' = 'classic'): SightlineResult {
  return {
    cellId, nStars: 0, nLayers: 0, layerCountSupport: 1, layerCountHistogram: [draws],
    clearForeground: true, layers: [], jumps: [], complex: false, segments: [], breaksFromNominal: [],
    starOrder: [], blendsMerged: 0, matchedDraws: draws, draws, totalCost: 0, method, starsNotPlaced: [],
  };
}

/**
 * Fits the layers of one sightline. Default method 'survey' (fitSurvey.ts: survey-like
 * parallaxes, layer count from the draws, steps tested); method 'classic' is the earlier fit of
 * this file, kept callable as the baseline (bench/recovery.ts prints both).
 */
export function fitSightline(stars: TomographyStar[], options: FitOptions = {}): SightlineResult {
  if ((options.method ?? DEFAULT_FIT_OPTIONS.method) === 'survey') return fitSightlineSurvey(stars, options);
  return fitSightlineClassic(stars, options);
}

/** The earlier fit (method 'classic'). See the file header for every choice made. */
export function fitSightlineClassic(stars: TomographyStar[], options: FitOptions = {}): SightlineResult {
  const opt = resolveFitOptions(options);
  validateStars(stars);
  const n = stars.length;
  if (n === 0) return emptyResult(opt.cellId, opt.draws);
  const canon = stars.slice().sort((a, b) => (a.id < b.id ? -1 : a.id > b.id ? 1 : 0));
  const penalty = opt.penaltyParamsPerBreak * Math.log(n);
  const table = new SegmentTable(
    canon.map((s) => s.q), canon.map((s) => s.u), canon.map((s) => s.qErr), canon.map((s) => s.uErr),
    hashSeed(opt.cellId, 'keys'),
  );
  const fitter = new OrderingFitter(table, opt, penalty);
  const sigmaCanon = Float64Array.from(canon, distanceSigmaPc);
  const nominalDist = Float64Array.from(canon, (s) => s.distancePc);

  // Nominal fit at catalogue distances.
  const perm = new Int32Array(n);
  for (let i = 0; i < n; i++) perm[i] = i;
  insertionSortBy(perm, nominalDist);
  const nominalPerm = perm.slice();
  const applyOrder = (dist: Float64Array): void => {
    table.setOrder(perm);
    for (let pos = 0; pos < n; pos++) {
      fitter.dist[pos] = dist[perm[pos]];
      fitter.sigma[pos] = sigmaCanon[perm[pos]];
    }
  };
  applyOrder(nominalDist);
  fitter.run();
  const bounds = fitter.bounds.slice();
  const clear = fitter.clearForeground();
  const nLayers = fitter.layerCount(clear);
  const blendsMerged = fitter.blendsMerged;
  const totalCost = fitter.totalCost();
  const nominalPositions = new Float64Array(Math.max(1, nLayers));
  fitter.positions(clear, nominalPositions, 0);

  const segments: TomographySegment[] = [];
  for (let j = 0; j < bounds.length - 1; j++) {
    const start = bounds[j], end = bounds[j + 1];
    const t = table.select(start, end);
    segments.push({
      start, end,
      nearestPc: fitter.dist[start], farthestPc: fitter.dist[end - 1],
      meanQ: t.selMeanQ, meanU: t.selMeanU,
      meanQErr: Math.sqrt(t.selVarMeanQ), meanUErr: Math.sqrt(t.selVarMeanU),
      scatter: Math.sqrt(t.selScatterVar), cost: t.selCost,
    });
  }

  // Monte Carlo over distance draws.
  const D = opt.draws;
  const hist: number[] = [];
  const matched = new Float64Array(Math.max(1, D * nLayers));
  let nMatched = 0;
  if (D > 0) {
    const samplers = canon.map(makeStarDistanceSampler);
    const drawDist = new Float64Array(n);
    const maxLayers = n + 1;
    const scratchPos = new Float64Array(maxLayers);
    for (let d = 0; d < D; d++) {
      const rng = mulberry32(hashSeed(opt.cellId, d));
      for (let i = 0; i < n; i++) drawDist[i] = samplers[i](rng);
      insertionSortBy(perm, drawDist);
      applyOrder(drawDist);
      fitter.run();
      const c = fitter.clearForeground();
      const L = fitter.layerCount(c);
      while (hist.length <= L) hist.push(0);
      hist[L]++;
      if (L === nLayers && nLayers > 0) {
        fitter.positions(c, scratchPos, 0, opt.breakPosition === 'uniform' ? rng : undefined);
        for (let k = 0; k < nLayers; k++) matched[k * D + nMatched] = scratchPos[k];
        nMatched++;
      } else if (L === nLayers) {
        nMatched++;
      }
    }
  }
  while (hist.length <= nLayers) hist.push(0);

  // Layers from the nominal segmentation.
  const layers: TomographyLayer[] = [];
  const firstSeg = clear ? 1 : 0;
  for (let k = 0; k < nLayers; k++) {
    const j = firstSeg + k;
    const seg = segments[j];
    const prev = j > 0 ? segments[j - 1] : undefined;
    const contribution = layerContribution(seg, prev);
    const kind: TomographyLayer['kind'] = !clear && k === 0 ? 'foreground' : 'break';
    let distancePc: number, distanceLoPc: number, distanceHiPc: number;
    if (nMatched > 0 && D > 0) {
      const col = matched.subarray(k * D, k * D + nMatched).slice().sort();
      distancePc = percentileSorted(col, 0.5);
      distanceLoPc = percentileSorted(col, 0.16);
      distanceHiPc = percentileSorted(col, 0.84);
    } else {
      distancePc = distanceLoPc = distanceHiPc = nominalPositions[k];
    }
    if (kind === 'foreground') distanceLoPc = 0;
    layers.push({
      index: k, kind, distancePc, distanceLoPc, distanceHiPc,
      distanceBound: kind === 'foreground' ? 'upper' : 'range',
      distanceNote: null,
      nStars: seg.end - seg.start, meanQ: seg.meanQ, meanU: seg.meanU, scatter: seg.scatter,
      ...contribution,
    });
  }

  const jumps: TomographyJump[] = [];
  for (let k = 1; k < layers.length; k++) jumps.push(jumpBetween(layers[k - 1], layers[k]));
  const complex = isComplex(layers, opt.minLayerSnr, opt.jumpThresholdDeg);

  return {
    cellId: opt.cellId,
    nStars: n,
    nLayers,
    layerCountSupport: D > 0 ? nMatched / D : 1,
    layerCountHistogram: hist,
    clearForeground: clear,
    layers,
    jumps,
    complex,
    segments,
    breaksFromNominal: bounds.slice(1, -1),
    starOrder: Array.from(nominalPerm, (i) => canon[i].id),
    blendsMerged,
    matchedDraws: nMatched,
    draws: D,
    totalCost,
    method: 'classic',
    starsNotPlaced: [],
  };
}

export function jumpBetween(from: TomographyLayer, to: TomographyLayer): TomographyJump {
  const deltaThetaDeg = angleDifferenceDeg(to.thetaDeg, from.thetaDeg);
  const sigmaDeg = Math.hypot(from.thetaErrDeg, to.thetaErrDeg);
  return {
    fromLayer: from.index,
    toLayer: to.index,
    deltaThetaDeg,
    sigmaDeg,
    significance: sigmaDeg > 0 ? Math.abs(deltaThetaDeg) / sigmaDeg : Infinity,
  };
}

/** Two successive layers among those with snr ≥ minLayerSnr differ by more than the threshold. */
export function isComplex(layers: TomographyLayer[], minLayerSnr: number, jumpThresholdDeg: number): boolean {
  let prev: TomographyLayer | undefined;
  for (const layer of layers) {
    if (!(layer.snr >= minLayerSnr)) continue;
    if (prev && Math.abs(angleDifferenceDeg(layer.thetaDeg, prev.thetaDeg)) > jumpThresholdDeg) return true;
    prev = layer;
  }
  return false;
}

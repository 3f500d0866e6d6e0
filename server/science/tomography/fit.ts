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

import { layerContribution } from './contribution';
import { angleDifferenceDeg } from '../axial';
import { CellOrdering, drawFits, OrderingFitter, segmentsOf } from './ordering';
import { fitSightlineSurvey } from './fitSurvey';
import type {
  FitOptions, SightlineResult, TomographyJump, TomographyLayer, TomographyStar,
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

/** The classic fit of one ordering: PELT and blend merging, its foreground test and positions. */
class ClassicOrderingFitter extends OrderingFitter {
  /** The nearest segment is consistent with zero: χ² (foregroundChi2) within the BIC-like penalty. */
  clearForeground(): boolean {
    return this.foregroundChi2() <= this.opt.foregroundPenaltyParams * Math.log(this.table.n);
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
  const ordering = new CellOrdering(canon, opt.cellId);
  const table = ordering.table;
  const fitter = new ClassicOrderingFitter(table, opt, penalty);

  // Nominal fit at catalogue distances.
  ordering.sortBy(ordering.nominalDist, fitter);
  const nominalPerm = ordering.perm.slice();
  fitter.run();
  const bounds = fitter.bounds.slice();
  const clear = fitter.clearForeground();
  const nLayers = fitter.layerCount(clear);
  const blendsMerged = fitter.blendsMerged;
  const totalCost = fitter.totalCost();
  const nominalPositions = new Float64Array(Math.max(1, nLayers));
  fitter.positions(clear, nominalPositions, 0);
  const segments = segmentsOf(table, bounds, fitter.dist);

  // Monte Carlo over distance draws.
  const D = opt.draws;
  const hist: number[] = [];
  const matched = new Float64Array(Math.max(1, D * nLayers));
  let nMatched = 0;
  const scratchPos = new Float64Array(n + 1);
  for (const draw of drawFits(ordering, fitter, opt, hist)) {
    if (draw.count === nLayers && nLayers > 0) {
      fitter.positions(draw.clear, scratchPos, 0, opt.breakPosition === 'uniform' ? draw.rng : undefined);
      for (let k = 0; k < nLayers; k++) matched[k * D + nMatched] = scratchPos[k];
      nMatched++;
    } else if (draw.count === nLayers) {
      nMatched++;
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

  return sightlineResult(opt, { canon, perm: nominalPerm, bounds }, {
    nStars: n,
    nLayers,
    layerCountSupport: D > 0 ? nMatched / D : 1,
    layerCountHistogram: hist,
    clearForeground: clear,
    layers,
    segments,
    blendsMerged,
    matchedDraws: nMatched,
    totalCost,
    method: 'classic',
    starsNotPlaced: [],
  });
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

/** A fit's result from its parts (keys in the stored order); jumps and the complex flag follow from the layers. */
export function sightlineResult(
  opt: ResolvedFitOptions,
  nominal: { canon: TomographyStar[]; perm: ArrayLike<number>; bounds: number[] },
  r: Omit<SightlineResult, 'cellId' | 'jumps' | 'complex' | 'draws' | 'breaksFromNominal' | 'starOrder'>,
): SightlineResult {
  return {
    cellId: opt.cellId,
    nStars: r.nStars,
    nLayers: r.nLayers,
    layerCountSupport: r.layerCountSupport,
    layerCountHistogram: r.layerCountHistogram,
    clearForeground: r.clearForeground,
    layers: r.layers,
    jumps: layerJumps(r.layers),
    complex: isComplex(r.layers, opt.minLayerSnr, opt.jumpThresholdDeg),
    segments: r.segments,
    breaksFromNominal: nominal.bounds.slice(1, -1),
    starOrder: Array.from(nominal.perm, (i) => nominal.canon[i].id),
    blendsMerged: r.blendsMerged,
    matchedDraws: r.matchedDraws,
    draws: opt.draws,
    totalCost: r.totalCost,
    method: r.method,
    starsNotPlaced: r.starsNotPlaced,
  };
}

/** The jumps between successive layers. */
export function layerJumps(layers: TomographyLayer[]): TomographyJump[] {
  const jumps: TomographyJump[] = [];
  for (let k = 1; k < layers.length; k++) jumps.push(jumpBetween(layers[k - 1], layers[k]));
  return jumps;
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

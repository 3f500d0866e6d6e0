/**
 * Sightline tomography for survey-like parallaxes (METHODS.md, "Tomography" and "Tomography with
 * survey-like parallaxes"); method 'survey', the default. The parts are those of the classic fit
 * (fit.ts): thin screens, segment cost with intrinsic scatter (segmentCost.ts), BIC penalty, PELT
 * (partition.ts), blend merging (blend.ts), Monte Carlo over distance posteriors
 * (distanceDraws.ts). What differs, each with its reason:
 *
 * 1. Which stars place breaks. A star whose parallax has ϖ/σϖ < 5 (zero point applied) has a
 *    distance posterior hundreds of parsecs wide and skewed by the prior (Bailer-Jones 2015, PASP
 *    127, 994: below S/N ≈ 5 the inverse parallax and the posterior mode are poor estimators);
 *    its (q, u) says little about where a step lies (METHODS.md). Such stars get weight zero in
 *    the segmentation — in the nominal fit and in every draw — and are listed in
 *    `starsNotPlaced`. The threshold 5 is the one METHODS.md uses for inverse parallaxes. When
 *    fewer than 2·minSegmentLength stars would remain, all stars are used (a small cell cannot
 *    afford to drop any; the draws then carry their distance uncertainty).
 * 2. The layer count is the one the distance draws support: the modal count over the D draws
 *    (ties: the nominal fit's count if it is among the tied, else the smallest), not the nominal
 *    fit's. layerCountSupport = share of draws with that count. Reason: the nominal fit uses one
 *    point distance per star and can disagree with every draw (issue 10, reproduction a).
 * 3. A break is a layer only when its step is significant. After PELT and blend merging, in every
 *    ordering, the boundary with the smallest step statistic
 *      χ²_step = Δq̄²/(var q̄_a + var q̄_b) + Δū²/(var ū_a + var ū_b)
 *    (the Wald statistic for equal means of two Gaussian samples, χ² with 2 dof under no step;
 *    e.g. Wasserman 2004, All of Statistics, §10.4) is removed while it is below the threshold
 *    x = 2·ln((n − 1)/α), α = stepFamilyAlpha (default 0.05): the χ²₂ tail is exp(−x/2), so this
 *    is a test at level α with a Bonferroni correction (Bonferroni 1936) for the n − 1 places a
 *    break could have been put. The variance of each side's mean is taken at the larger of the two
 *    sides' fitted scatters, 1/Σ 1/(σ_i² + max(s_a², s_b²)): so a change of scatter alone (the
 *    quieter side's small variance) cannot make a small difference of means significant, and a
 *    short segment's maximum-likelihood scatter, biased low, does not inflate the statistic.
 *    PELT's own penalty counts the total cost gain, which a change of scatter with the same mean
 *    can pay for (reproduction b); this test looks at the means only.
 *    The nearest segment is read as polarized (a 'foreground' layer) only when its mean passes the
 *    same test against zero (and the classic fit's 2·ln n rule): a foreground layer is a layer
 *    like any other and needs the same evidence.
 * 4. One or two unpolarized stars in front of a cloud. PELT's minimum segment length (3) forces
 *    them into a segment with polarized stars, moving the cloud behind them (reproduction c), or
 *    read the whole nearest segment as polarized, drawing a foreground layer in front of an
 *    unpolarized nearest star. So the nearest segment is split once more at j < minSegmentLength
 *    stars when the first j stars are consistent with zero polarization (the clear-foreground
 *    test) and the step from them to the rest passes the step test (3).
 * 5. Distances. Per layer, the 16/50/84 % points of the break position over the draws with the
 *    reported count and foreground reading (uniform within the gap between the straddling stars,
 *    as in the classic fit). A 'foreground' layer (the nearest placed stars already polarized) is
 *    reported as an upper bound: distanceBound 'upper', distanceLoPc 0, distanceHiPc the 84th
 *    percentile over the draws of the distance of the minSegmentLength-th nearest placed star (the
 *    polarized reading is the nearest segment's as a whole; the nearest star alone gave bounds
 *    below the truth when one unpolarized star sat in that segment). A range is never reported with zero width:
 *    when the draws cannot give one (draws = 0, or every draw put the break between the same two
 *    stars at fixed distances) the range is widened to the straddling stars' own 16–84 % ranges
 *    and distanceNote says so in words (distanceBound 'interval'). Likewise a break with fewer than
 *    minSegmentLength placed stars in front (choice 4): the draws only say that the cloud lies in
 *    the gap between those stars and the ones behind, and where the gap is wide a uniform 16–84 %
 *    of it misses a cloud near its far end; so the range is widened to the gap itself (16th
 *    percentile of the near star's, 84th of the far star's position over the draws), marked
 *    'interval' and said in words.
 * 6. Amplitudes. The reported segments are the placed stars in catalogue-distance order cut at
 *    the reported (median) layer distances, so the segment means shown belong to the layers shown.
 */

import { layerContribution } from './contribution';
import { correctParallax } from '../distance';
import type { SegmentTable } from './segmentTable';
import { distanceSigmaPc } from './distanceDraws';
import { CellOrdering, drawFits, OrderingFitter, segmentsOf } from './ordering';
import {
  resolveFitOptions, validateStars, emptyResult, percentileSorted, sightlineResult, type ResolvedFitOptions,
} from './fit';
import type { FitOptions, SightlineResult, TomographyLayer, TomographyStar } from './types';

/** Precision of a star's distance as a parallax S/N: ϖ/σϖ (zero point applied), else d/σ_d. */
export function distanceSnr(s: TomographyStar): number {
  if (s.parallaxMas !== undefined && s.parallaxErrMas !== undefined && Number.isFinite(s.parallaxMas) && s.parallaxErrMas > 0) {
    return correctParallax(s.parallaxMas) / s.parallaxErrMas;
  }
  const sd = distanceSigmaPc(s);
  return sd > 0 ? s.distancePc / sd : Infinity;
}

/** Segments one ordering: PELT, blend merging, nearest split, step test; then the foreground reading. */
class SurveyOrderingFitter extends OrderingFitter {
  private readonly stepThreshold: number;
  private readonly clearThreshold: number;

  constructor(table: SegmentTable, opt: ResolvedFitOptions, penalty: number) {
    super(table, opt, penalty);
    const lnN = Math.log(Math.max(2, table.n));
    this.stepThreshold = stepChi2Threshold(table.n, opt.stepFamilyAlpha);
    this.clearThreshold = Math.max(this.stepThreshold, opt.foregroundPenaltyParams * lnN);
  }

  run(): void {
    super.run();
    // Split before merging (a mixed nearest segment's large scatter would hide the steps behind
    // it), and again after (merging can leave the unpolarized stars inside a longer segment).
    this.splitNearest();
    this.mergeWeakSteps();
    if (this.splitNearest()) this.mergeWeakSteps();
  }

  /** χ² of the mean of [a, b) against zero (q̄²/var q̄ + ū²/var ū at the fitted scatter). */
  private chi2VsZero(a: number, b: number): number {
    const t = this.table.select(a, b);
    return (t.selMeanQ * t.selMeanQ) / t.selVarMeanQ + (t.selMeanU * t.selMeanU) / t.selVarMeanU;
  }

  /**
   * 1/Σ 1/(σ_i² + s2) over [a, b) for q and u, into varQ / varU, times m/(m − 1) for m > 1 stars:
   * the fitted scatter is a maximum-likelihood estimate, which for a mean fitted from the same m
   * stars understates the variance by (m − 1)/m (Bessel's correction; the REML/ML ratio for a
   * common mean), and the short segments between true steps are where that matters.
   */
  private varMeansAt(a: number, b: number, s2: number): void {
    const t = this.table;
    let wq = 0, wu = 0;
    for (let i = a; i < b; i++) { wq += 1 / (t.vq[i] + s2); wu += 1 / (t.vu[i] + s2); }
    const m = b - a;
    const bessel = m > 1 && s2 > 0 ? m / (m - 1) : 1;
    this.varQ = bessel / wq;
    this.varU = bessel / wu;
  }
  private varQ = 0;
  private varU = 0;

  /** χ²_step between [a, b) and [b, c) (2 dof), variances at the larger fitted scatter. */
  stepChi2(a: number, b: number, c: number): number {
    const t = this.table.select(a, b);
    const mq = t.selMeanQ, mu = t.selMeanU, sa = t.selScatterVar;
    t.select(b, c);
    const dq = t.selMeanQ - mq, du = t.selMeanU - mu, sb = t.selScatterVar;
    this.varMeansAt(a, b, sa);
    const vqa = this.varQ, vua = this.varU;
    this.varMeansAt(b, c, sb);
    return (dq * dq) / (vqa + this.varQ) + (du * du) / (vua + this.varU);
  }

  /**
   * Choice 4: split off the j < minSegmentLength nearest stars when they are consistent with zero
   * and the step from them to the rest of the nearest segment passes the step test (the j with
   * the largest step). PELT's cost gain is not asked for: the segment behind can absorb one or two
   * unpolarized stars into a larger fitted scatter, which is exactly the case to undo.
   */
  private splitNearest(): boolean {
    const b1 = this.bounds[1];
    const m = this.opt.minSegmentLength;
    if (b1 < 2 || m < 2) return false;
    const wholePolarized = this.chi2VsZero(0, b1) > this.clearThreshold;
    let best = -1;
    let bestJoin = false;
    let bestChi2 = this.stepThreshold;
    for (let j = 1; j < m && j < b1; j++) {
      if (this.chi2VsZero(0, j) > this.clearThreshold) continue;
      // With fewer than m stars left of the nearest segment, and those polarized, they belong
      // with the next segment (the minimum length had forced them in front): test against, and
      // join, that one. Otherwise the nearest segment as a whole must read as polarized.
      const join = b1 - j < m && this.bounds.length > 2;
      if (join ? !(this.chi2VsZero(j, b1) > this.clearThreshold) : !wholePolarized) continue;
      const c = this.stepChi2(0, j, join ? this.bounds[2] : b1);
      if (c >= bestChi2) { bestChi2 = c; best = j; bestJoin = join; }
    }
    if (best < 0) return false;
    if (bestJoin) this.bounds[1] = best;
    else this.bounds.splice(1, 0, best);
    return true;
  }

  /** Choice 3: remove the least significant boundary while its step is below the threshold. */
  private mergeWeakSteps(): void {
    const b = this.bounds;
    while (b.length > 2) {
      let worst = -1;
      let worstChi2 = Infinity;
      for (let j = 1; j < b.length - 1; j++) {
        const c = this.stepChi2(b[j - 1], b[j], b[j + 1]);
        if (c < worstChi2) { worstChi2 = c; worst = j; }
      }
      if (worstChi2 >= this.stepThreshold) break;
      b.splice(worst, 1);
    }
  }

  /** Whether the nearest segment is consistent with zero: foregroundChi2 within clearThreshold. */
  clearForeground(): boolean {
    return this.foregroundChi2() <= this.clearThreshold;
  }

  /** Layer positions into out; with gapLo/gapHi also the two stars straddling each break. */
  positions(clear: boolean, out: Float64Array, rng?: () => number, gapLo?: Float64Array, gapHi?: Float64Array): void {
    let k = 0;
    // Foreground layer: the bound is the m-th nearest star (m = minSegmentLength), not the
    // nearest: the "already polarized" reading is about the nearest segment as a whole, and one
    // unpolarized star in front of the cloud may sit in it.
    if (!clear) {
      if (gapLo && gapHi) gapLo[k] = gapHi[k] = 0;
      out[k++] = this.dist[Math.min(this.bounds[1], this.opt.minSegmentLength) - 1];
    }
    for (let j = 1; j < this.bounds.length - 1; j++) {
      const c = this.bounds[j];
      const f = rng ? rng() : 0.5;
      if (gapLo && gapHi) { gapLo[k] = this.dist[c - 1]; gapHi[k] = this.dist[c]; }
      out[k++] = this.dist[c - 1] + f * (this.dist[c] - this.dist[c - 1]);
    }
  }
}

/** Fits the layers of one sightline with method 'survey'. See the file header. */
export function fitSightlineSurvey(stars: TomographyStar[], options: FitOptions = {}): SightlineResult {
  const opt = resolveFitOptions(options);
  validateStars(stars);
  const nAll = stars.length;
  if (nAll === 0) return emptyResult(opt.cellId, opt.draws, 'survey');
  const canonAll = stars.slice().sort((a, b) => (a.id < b.id ? -1 : a.id > b.id ? 1 : 0));
  let canon = canonAll.filter((s) => distanceSnr(s) >= opt.placeMinParallaxSnr);
  if (canon.length < 2 * opt.minSegmentLength) canon = canonAll;
  const placedIds = new Set(canon.map((s) => s.id));
  const starsNotPlaced = canonAll.filter((s) => !placedIds.has(s.id)).map((s) => s.id);
  const n = canon.length;
  const penalty = opt.penaltyParamsPerBreak * Math.log(n);
  const ordering = new CellOrdering(canon, opt.cellId);
  const table = ordering.table;
  const fitter = new SurveyOrderingFitter(table, opt, penalty);
  const nominalDist = ordering.nominalDist;

  // Nominal fit (catalogue distances): the tie-breaker, and the reading when draws = 0.
  ordering.sortBy(nominalDist, fitter);
  const nominalPerm = ordering.perm.slice();
  fitter.run();
  const nominalClear = fitter.clearForeground();
  const nominalCount = fitter.layerCount(nominalClear);
  const blendsMerged = fitter.blendsMerged;
  const nominalPositions = new Float64Array(n + 1);
  fitter.positions(nominalClear, nominalPositions);
  const nominalBounds = fitter.bounds.slice();

  // Monte Carlo over distance draws: every draw's count, foreground reading and positions.
  const D = opt.draws;
  const hist: number[] = [];
  const drawCount = new Int32Array(D);
  const drawClear = new Uint8Array(D);
  const drawPositions: Float64Array[] = [];
  const drawGapLo: Float64Array[] = [];
  const drawGapHi: Float64Array[] = [];
  const scratch = new Float64Array(n + 1);
  const scratchLo = new Float64Array(n + 1);
  const scratchHi = new Float64Array(n + 1);
  for (const { draw: d, rng, clear: c, count: L } of drawFits(ordering, fitter, opt, hist)) {
    drawCount[d] = L;
    drawClear[d] = c ? 1 : 0;
    fitter.positions(c, scratch, opt.breakPosition === 'uniform' ? rng : undefined, scratchLo, scratchHi);
    drawPositions.push(scratch.slice(0, L));
    drawGapLo.push(scratchLo.slice(0, L));
    drawGapHi.push(scratchHi.slice(0, L));
  }

  // Choice 2: the modal count over the draws (nominal as tie-breaker).
  let nLayers = nominalCount;
  let clear = nominalClear;
  if (D > 0) {
    const top = Math.max(...hist);
    const tied = hist.flatMap((h, L) => (h === top ? [L] : []));
    nLayers = tied.includes(nominalCount) ? nominalCount : tied[0];
    let clearVotes = 0, total = 0;
    for (let d = 0; d < D; d++) if (drawCount[d] === nLayers) { total++; clearVotes += drawClear[d]; }
    clear = 2 * clearVotes === total ? (nLayers === nominalCount ? nominalClear : true) : 2 * clearVotes > total;
  }
  while (hist.length <= nLayers) hist.push(0);
  if (nLayers === 0) clear = true;

  // Layer positions over the matched draws.
  const matchedIdx: number[] = [];
  for (let d = 0; d < D; d++) if (drawCount[d] === nLayers && (drawClear[d] === 1) === clear) matchedIdx.push(d);
  const nMatched = matchedIdx.length;
  const lo = new Float64Array(nLayers), mid = new Float64Array(nLayers), hi = new Float64Array(nLayers);
  const gapLo = new Float64Array(nLayers).fill(NaN), gapHi = new Float64Array(nLayers).fill(NaN);
  const sameAsNominal = nominalCount === nLayers && nominalClear === clear;
  for (let k = 0; k < nLayers; k++) {
    if (nMatched > 0) {
      const col = Float64Array.from(matchedIdx, (d) => drawPositions[d][k]).sort();
      lo[k] = percentileSorted(col, 0.16);
      mid[k] = percentileSorted(col, 0.5);
      hi[k] = percentileSorted(col, 0.84);
      gapLo[k] = percentileSorted(Float64Array.from(matchedIdx, (d) => drawGapLo[d][k]).sort(), 0.16);
      gapHi[k] = percentileSorted(Float64Array.from(matchedIdx, (d) => drawGapHi[d][k]).sort(), 0.84);
    } else if (sameAsNominal) {
      lo[k] = mid[k] = hi[k] = nominalPositions[k];
    } else {
      lo[k] = mid[k] = hi[k] = NaN;
    }
  }

  // Choice 6: segments of the placed stars in nominal order cut at the reported layer distances.
  const sortedNominal = Float64Array.from(nominalPerm, (i) => nominalDist[i]);
  const bounds: number[] = [0];
  const firstBreak = clear ? 0 : 1;
  if (nMatched === 0 && sameAsNominal) {
    for (let j = 1; j < nominalBounds.length - 1; j++) bounds.push(nominalBounds[j]);
  } else {
    for (let k = firstBreak; k < nLayers; k++) {
      bounds.push(Number.isFinite(mid[k]) ? countBelow(sortedNominal, mid[k]) : Math.floor(((k + 1) * n) / (nLayers + 1)));
    }
  }
  bounds.push(n);
  // Keep every segment non-empty: cuts strictly increasing within 1..n−1.
  const nb = bounds.length - 2;
  for (let j = 1; j <= nb; j++) bounds[j] = Math.min(Math.max(bounds[j], bounds[j - 1] + 1), n - (nb - j + 1));
  ordering.perm.set(nominalPerm); // the draws left perm in their own order
  ordering.apply(nominalDist, fitter);

  const segments = segmentsOf(table, bounds, fitter.dist);
  let totalCost = penalty * (bounds.length - 2);
  for (const s of segments) totalCost += s.cost;

  const layers: TomographyLayer[] = [];
  const firstSeg = clear ? 1 : 0;
  for (let k = 0; k < nLayers; k++) {
    const j = Math.min(firstSeg + k, segments.length - 1);
    const seg = segments[j];
    const prev = j > 0 ? segments[j - 1] : undefined;
    const contribution = layerContribution(seg, prev);
    const kind: TomographyLayer['kind'] = !clear && k === 0 ? 'foreground' : 'break';
    let distancePc = mid[k], distanceLoPc = lo[k], distanceHiPc = hi[k];
    let distanceNote: string | null = null;
    let distanceBound: TomographyLayer['distanceBound'] = kind === 'foreground' ? 'upper' : 'range';
    const inFront = kind === 'break' ? bounds[firstSeg + k] - bounds[firstSeg + k - 1] : 0;
    if (kind === 'break' && inFront < opt.minSegmentLength && Number.isFinite(gapLo[k]) && Number.isFinite(gapHi[k])) {
      // Choice 5: too few stars in front to say more than "in the gap" — an interval, in words.
      distanceLoPc = Math.min(distanceLoPc, gapLo[k]);
      distanceHiPc = Math.max(distanceHiPc, gapHi[k]);
      distanceBound = 'interval';
      distanceNote = `between ${Math.round(distanceLoPc)} and ${Math.round(distanceHiPc)} pc: only ${inFront} star${inFront === 1 ? '' : 's'} with usable distances lie${inFront === 1 ? 's' : ''} in front of this cloud, so it is known only to lie in the gap between ${inFront === 1 ? 'that star' : 'them'} and the stars behind it (not a 16–84 % range)`;
    }
    if (kind === 'foreground') {
      distanceLoPc = 0;
      if (!Number.isFinite(distanceHiPc)) distancePc = distanceHiPc = fitter.dist[0];
      distanceHiPc = Math.max(distanceHiPc, distancePc);
      distanceNote = `nearer than ${Math.round(distanceHiPc)} pc: the nearest stars with usable distances are already polarized, so this cloud lies in front of them (an upper bound, no lower one)`;
    } else {
      // The gap in nominal order where this break's cut lies, for a fallback range.
      const cut = bounds[firstSeg + k];
      const before = canon[nominalPerm[Math.max(0, cut - 1)]];
      const after = canon[nominalPerm[Math.min(n - 1, cut)]];
      if (!Number.isFinite(distancePc)) distancePc = 0.5 * (before.distancePc + after.distancePc);
      const width = distanceHiPc - distanceLoPc;
      if (!(width > 1e-6 * distancePc)) {
        distanceBound = 'interval';
        distanceLoPc = Math.min(distancePc, before.distanceLoPc);
        distanceHiPc = Math.max(distancePc, after.distanceHiPc);
        distanceNote = nMatched === 0
          ? `unresolved: no distance draw supports this layer's place, so the range shown spans the two stars around the break (${Math.round(distanceLoPc)}–${Math.round(distanceHiPc)} pc, their own 16–84 % ranges)`
          : `unresolved: every distance draw puts the break between the same two stars, so the range shown spans their own 16–84 % distance ranges (${Math.round(distanceLoPc)}–${Math.round(distanceHiPc)} pc)`;
      }
    }
    layers.push({
      index: k, kind, distancePc, distanceLoPc, distanceHiPc,
      distanceBound,
      distanceNote,
      stepChi2: prev
        ? ((seg.meanQ - prev.meanQ) ** 2) / (seg.meanQErr ** 2 + prev.meanQErr ** 2) + ((seg.meanU - prev.meanU) ** 2) / (seg.meanUErr ** 2 + prev.meanUErr ** 2)
        : (seg.meanQ ** 2) / seg.meanQErr ** 2 + (seg.meanU ** 2) / seg.meanUErr ** 2,
      nStars: seg.end - seg.start, meanQ: seg.meanQ, meanU: seg.meanU, scatter: seg.scatter,
      ...contribution,
    });
  }

  return sightlineResult(opt, { canon, perm: nominalPerm, bounds }, {
    nStars: nAll,
    nLayers,
    layerCountSupport: D > 0 ? (hist[nLayers] ?? 0) / D : 1,
    layerCountHistogram: hist,
    clearForeground: clear,
    layers,
    segments,
    blendsMerged,
    matchedDraws: D > 0 ? nMatched : 0,
    totalCost,
    method: 'survey',
    starsNotPlaced,
  });
}

/** Choice 3: χ²₂ threshold 2·ln((n − 1)/α), Bonferroni over the n − 1 possible break places. */
export function stepChi2Threshold(n: number, alpha: number): number {
  return 2 * Math.log(Math.max(1, n - 1) / alpha);
}

/** Number of sorted values strictly below x. */
function countBelow(sorted: Float64Array, x: number): number {
  let lo = 0, hi = sorted.length;
  while (lo < hi) {
    const m = (lo + hi) >> 1;
    if (sorted[m] < x) lo = m + 1; else hi = m;
  }
  return lo;
}

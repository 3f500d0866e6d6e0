/**
 * Types of the sightline tomography fit (METHODS.md, "Tomography").
 *
 * Stokes parameters are normalised fractions (q = Q/I, u = U/I, not percent), in one band and one
 * frame (the frame the caller chose; angles are east of that frame's north, IAU convention).
 * Starlight polarization is parallel to the plane-of-sky magnetic field, so a layer's `thetaDeg`
 * is a field angle directly; thermal dust emission polarization is perpendicular to it
 * (field angle = emission angle + 90°, common practice) — add 90° before comparing a layer angle
 * with an emission map's polarization angle.
 */

/** One star of a cell. Distances in parsec, parallaxes in milliarcseconds. */
export interface TomographyStar {
  id: string;
  /** Catalogue distance (inverse parallax or posterior mode). */
  distancePc: number;
  /** 16th percentile of the distance posterior. */
  distanceLoPc: number;
  /** 84th percentile of the distance posterior. */
  distanceHiPc: number;
  /**
   * Catalogue parallax (before the global zero point, as stored) and its error. When both are
   * present the Monte Carlo draws come from the parallax posterior of server/science/distance.ts
   * (zero point applied there, exponentially decreasing space density prior); otherwise from
   * `distanceErrPc` (Gaussian truncated at 0), otherwise from the 16–84 % interval (split
   * normal).
   */
  parallaxMas?: number;
  parallaxErrMas?: number;
  distanceErrPc?: number;
  q: number;
  u: number;
  qErr: number;
  uErr: number;
}

export interface FitOptions {
  /**
   * 'survey' (default, fitSurvey.ts): stars with poor parallaxes do not place breaks, the layer
   * count is the one the distance draws support, every step is tested. 'classic': the earlier fit
   * (fit.ts), kept as the baseline.
   */
  method?: 'survey' | 'classic';
  /** 'survey': a star places breaks only when ϖ/σϖ (zero point applied) is at least this. Default 5. */
  placeMinParallaxSnr?: number;
  /**
   * 'survey': family-wise level of the step test — a break is a layer only when its step χ² (2 dof)
   * exceeds 2·ln((n − 1)/α) (Bonferroni over the n − 1 break places). Default 0.05.
   */
  stepFamilyAlpha?: number;
  /** Monte Carlo distance draws (0 = nominal fit only). Default 100. */
  draws?: number;
  /** Fewest stars in a segment. Default 3. */
  minSegmentLength?: number;
  /** |Δθ| (deg) above which a jump between two significant layers makes a sightline complex. Default 30. */
  jumpThresholdDeg?: number;
  /** p_debiased/σp a layer needs to count towards "complex". Default 3. */
  minLayerSnr?: number;
  /** Identifies the cell in the random streams: rng(draw) = mulberry32(hashSeed(cellId, draw)). Default 'cell'. */
  cellId?: string;
  /** Alternative to cellId when there is no natural identifier; used as String(seed). */
  seed?: number;
  /** Penalty per break in units of ln(nStars). Default 4 (BIC: position, q̄, ū, s). */
  penaltyParamsPerBreak?: number;
  /** A blend candidate's distance span may be at most this many times √2·σ_rms of its stars. Default 3. */
  blendSpanSigma?: number;
  /** Tail probability (χ², 1 dof) above which a segment mean counts as a blend of its neighbours. Default 0.05. */
  blendAlpha?: number;
  /**
   * The nearest segment counts as polarized (a 'foreground' layer in front of every star) when
   * its χ² against zero exceeds this many times ln(n). Default 2 (BIC for q̄ and ū).
   */
  foregroundPenaltyParams?: number;
  /**
   * Where a break sits in one draw, between the last star before it and the first star after
   * it (that draw's distances): 'midpoint', or 'uniform' (default) — a uniform point between the
   * two, drawn from the draw's random stream. The midpoint leaves out that the cloud edge can be
   * anywhere in the gap, so its 16–84 % ranges are too narrow whenever the gap is wider than the
   * distance errors (see the coverage test).
   */
  breakPosition?: 'uniform' | 'midpoint';
}

/** One cloud (thin screen) along the sightline. */
export interface TomographyLayer {
  index: number;
  /**
   * 'break': the layer starts at a break between two segments; distancePc is the median over
   * matched draws of the break position (midpoint of the two stars that straddle it), i.e. the
   * cloud's near edge.
   * 'foreground': the nearest stars are already polarized, so the cloud lies between the observer
   * and the nearest star: distanceLoPc = 0 (unconstrained from below), distancePc and
   * distanceHiPc are the median and 84th percentile of the nearest star's distance — an upper
   * limit, not a measurement.
   */
  kind: 'break' | 'foreground';
  distancePc: number;
  distanceLoPc: number;
  distanceHiPc: number;
  /**
   * 'range': distanceLoPc–distanceHiPc is a 16–84 % range of the near edge. 'upper': only an
   * upper bound is known (the cloud lies nearer than distanceHiPc; distanceLoPc = 0).
   * 'interval': the cloud lies somewhere between distanceLoPc and distanceHiPc, the stars do not
   * say where (too few stars in front of it, or every draw puts the break in the same gap).
   */
  distanceBound: 'range' | 'upper' | 'interval';
  /** In words, when the distance is a bound or could not be resolved; null otherwise. */
  distanceNote: string | null;
  /** 'survey': χ² (2 dof) of this layer's step ΔS against no step; null for 'classic'. */
  stepChi2?: number | null;
  /** Stars in the segment behind this layer (up to the next break). */
  nStars: number;
  /** Mean (q̄, ū) of that segment: the summed contribution of every layer up to this one. */
  meanQ: number;
  meanU: number;
  /** Fitted intrinsic scatter s of that segment (fraction, same units as q). */
  scatter: number;
  /** Own contribution ΔS = S̄_k − S̄_{k−1} (S̄_{−1} = 0 for a 'foreground' layer). */
  deltaQ: number;
  deltaU: number;
  deltaQErr: number;
  deltaUErr: number;
  p: number;
  pErr: number;
  /** Modified asymptotic estimator (Plaszczynski et al. 2014) with b = sqrt((σΔq² + σΔu²)/2). */
  pDebiased: number;
  thetaDeg: number;
  thetaErrDeg: number;
  /** pDebiased / pErr. */
  snr: number;
  /** p/σp below 5: the angle distribution is not Gaussian (Naghizadeh-Khouei & Clarke 1993). */
  angleNonGaussian: boolean;
}

export interface TomographyJump {
  fromLayer: number;
  toLayer: number;
  /** θ_to − θ_from wrapped to (−90, 90]. */
  deltaThetaDeg: number;
  /** sqrt(σθ_from² + σθ_to²). */
  sigmaDeg: number;
  /** |Δθ| / σ. */
  significance: number;
}

/** A segment of the nominal fit (stars sorted by catalogue distance). */
export interface TomographySegment {
  /** Index of the first and one past the last star in distance order. */
  start: number;
  end: number;
  nearestPc: number;
  farthestPc: number;
  meanQ: number;
  meanU: number;
  meanQErr: number;
  meanUErr: number;
  scatter: number;
  /** −2 max ln L of the segment. */
  cost: number;
}

export interface SightlineResult {
  cellId: string;
  nStars: number;
  nLayers: number;
  /** Share of Monte Carlo draws whose fit gives nLayers layers (1 when draws = 0). */
  layerCountSupport: number;
  /** Count of draws per number of layers (index = number of layers). */
  layerCountHistogram: number[];
  /** Whether the nearest segment was read as unpolarized foreground in the nominal fit. */
  clearForeground: boolean;
  layers: TomographyLayer[];
  jumps: TomographyJump[];
  complex: boolean;
  /** Nominal segmentation (catalogue distances) after blend merging. */
  segments: TomographySegment[];
  /** Break indices (first star of each segment after the first) in nominal distance order. */
  breaksFromNominal: number[];
  /** Star ids in nominal distance order (what the indices above refer to). */
  starOrder: string[];
  /** Blend segments merged away in the nominal fit. */
  blendsMerged: number;
  /** Draws whose layer count matched nLayers (the draws behind the distance percentiles). */
  matchedDraws: number;
  draws: number;
  /** Total penalised cost of the nominal segmentation. */
  totalCost: number;
  /** Which fit produced this result. */
  method: 'survey' | 'classic';
  /**
   * 'survey': ids of stars whose parallax is too poor (ϖ/σϖ below placeMinParallaxSnr) to place a
   * break; they are left out of the segmentation (not in starOrder). Empty for 'classic'.
   */
  starsNotPlaced: string[];
}

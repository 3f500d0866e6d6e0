/**
 * Distances from parallaxes.
 *
 * Units: parallax ϖ in mas, distance r in kpc inside the EDSD formulas (1/r[kpc] = ϖ[mas]),
 * results in pc.
 *
 * Posterior (Bailer-Jones 2015, PASP 127, 994, exponentially decreasing space density prior):
 *   P(r | ϖ, σ) ∝ r²·exp(−r/L)·exp(−(ϖ − 1/r)² / (2σ²)),   r > 0,
 * with L = 1.35 kpc (Astraatmadja & Bailer-Jones 2016, ApJ 832, 137).
 *
 * Reported distance: 1/ϖ (with 1/(ϖ ± σ) as 16/84 % bounds) when the zero-point–corrected
 * ϖ/σ ≥ 5; otherwise the posterior mode with the posterior's 16th and 84th percentiles.
 *
 * Distance draws (makeDistanceSampler) always come from the same EDSD posterior, whatever the
 * S/N: it is proper for any parallax (including negative ones). At ϖ/σ ≥ 5 and ϖ ≥ 0.1 mas
 * (within ~10 kpc) its median lies inside the reported 1/(ϖ ± σ) range; for more distant
 * stars the L = 1.35 kpc prior pulls the draws nearer than 1/ϖ (median ≈ 0.8/ϖ at 20 kpc).
 */

/** Global parallax zero point of the astrometric catalog, mas (Lindegren et al. 2021, A&A 649, A4). */
export const PARALLAX_ZERO_POINT_MAS = -0.017;

/** EDSD prior length scale, kpc (Astraatmadja & Bailer-Jones 2016, ApJ 832, 137). */
export const EDSD_LENGTH_SCALE_KPC = 1.35;

/** Corrected-parallax S/N at and above which 1/ϖ is used (METHODS.md: ϖ/σϖ ≥ 5). */
export const INVERSE_PARALLAX_MIN_SNR = 5;

/** Grid size of the tabulated posterior CDF (uniform in ln r). */
const TABLE_SIZE = 256;
/** The tabulated range stops where the density in ln r is e^−30 below its peak. */
const TAIL_LOG_DENSITY_DROP = 30;

/** ϖ_corr = ϖ − zero point = ϖ + 0.017 mas (Lindegren et al. 2021). */
export function correctParallax(plxMas: number): number {
  return plxMas - PARALLAX_ZERO_POINT_MAS;
}

function assertParallaxInputs(parallaxMas: number, parallaxErrMas: number, lengthScaleKpc: number): void {
  if (!Number.isFinite(parallaxMas)) throw new RangeError(`parallax ${parallaxMas} mas: expected a finite number`);
  if (!(parallaxErrMas > 0) || !Number.isFinite(parallaxErrMas)) {
    throw new RangeError(`parallax error ${parallaxErrMas} mas: expected a finite number > 0`);
  }
  if (!(lengthScaleKpc > 0) || !Number.isFinite(lengthScaleKpc)) {
    throw new RangeError(`EDSD length scale ${lengthScaleKpc} kpc: expected a finite number > 0`);
  }
}

/** ln P(r | ϖ, σ) up to a constant (r in kpc). */
function edsdLogPosterior(rKpc: number, plx: number, sigma: number, lengthKpc: number): number {
  const d = plx - 1 / rKpc;
  return 2 * Math.log(rKpc) - rKpc / lengthKpc - (d * d) / (2 * sigma * sigma);
}

/**
 * Positive real roots, ascending, of the monic cubic r³ + a r² + b r + c = 0 (Cardano /
 * trigonometric form, then Newton-polished: the closed forms lose digits when coefficients
 * are large, as at high parallax S/N).
 */
function positiveCubicRoots(a: number, b: number, c: number): number[] {
  const shift = -a / 3;
  const p = b - (a * a) / 3;
  const q = (2 * a * a * a) / 27 - (a * b) / 3 + c;
  const disc = (q * q) / 4 + (p * p * p) / 27;
  const raw: number[] = [];
  if (disc > 0) {
    const sq = Math.sqrt(disc);
    const A = -Math.cbrt(q / 2 + (q >= 0 ? sq : -sq));
    raw.push((A === 0 ? 0 : A - p / (3 * A)) + shift);
  } else {
    const m = 2 * Math.sqrt(-p / 3);
    const arg = p === 0 ? 0 : Math.max(-1, Math.min(1, ((3 * q) / (2 * p)) * Math.sqrt(-3 / p)));
    const phi = Math.acos(arg) / 3;
    for (let k = 0; k < 3; k++) raw.push(m * Math.cos(phi - (2 * Math.PI * k) / 3) + shift);
  }
  const roots: number[] = [];
  for (let r of raw) {
    for (let it = 0; it < 8; it++) {
      const f = ((r + a) * r + b) * r + c;
      const df = (3 * r + 2 * a) * r + b;
      if (df === 0) break;
      const next = r - f / df;
      const fNext = ((next + a) * next + b) * next + c;
      if (!(Math.abs(fNext) < Math.abs(f))) break;
      r = next;
      if (fNext === 0) break;
    }
    if (r > 0 && Number.isFinite(r)) roots.push(r);
  }
  return roots.sort((x, y) => x - y);
}

/**
 * Mode of the EDSD distance posterior in kpc (Bailer-Jones 2015, PASP 127, 994): the real
 * positive root of r³/L − 2r² + (ϖ/σ²)·r − 1/σ² = 0. When three roots are real, two are local
 * maxima and one a minimum; the root with the highest posterior density is returned.
 * The parallax is used as given (no zero point applied here).
 */
export function edsdModeKpc(
  parallaxMas: number,
  parallaxErrMas: number,
  lengthScaleKpc: number = EDSD_LENGTH_SCALE_KPC,
): number {
  assertParallaxInputs(parallaxMas, parallaxErrMas, lengthScaleKpc);
  const s2 = parallaxErrMas * parallaxErrMas;
  const L = lengthScaleKpc;
  const roots = positiveCubicRoots(-2 * L, (L * parallaxMas) / s2, -L / s2);
  let best = roots[0];
  let bestLogP = -Infinity;
  for (const r of roots) {
    const lp = edsdLogPosterior(r, parallaxMas, parallaxErrMas, L);
    if (lp > bestLogP) {
      bestLogP = lp;
      best = r;
    }
  }
  return best;
}

/**
 * The EDSD posterior tabulated on a grid uniform in x = ln r (kpc). Between two nodes the log
 * density is taken linear in x (density exponential in x), which is integrated and inverted
 * exactly: cdf[i] is the normalised integral up to node i, w[i] the density at node i on the
 * same normalisation.
 */
interface EdsdTable {
  xLo: number;
  dx: number;
  cdf: Float64Array;
  w: Float64Array;
}

/** log density in x = ln r: ln P(e^x) + x. */
function logDensityLnR(x: number, plx: number, invTwoS2: number, invL: number): number {
  const r = Math.exp(x);
  const d = plx - 1 / r;
  return 3 * x - r * invL - d * d * invTwoS2;
}

const scratchLogDensity = new Float64Array(TABLE_SIZE);

/** ∫₀^h w0·e^{k s} ds for log-density slope k over a cell of width h. */
function cellMass(w0: number, w1: number, df: number, h: number): number {
  return Math.abs(df) > 1e-9 ? (h * (w1 - w0)) / df : 0.5 * h * (w0 + w1);
}

function buildEdsdTable(plx: number, sigma: number, lengthKpc: number): EdsdTable {
  const s2 = sigma * sigma;
  const invTwoS2 = 1 / (2 * s2);
  const invL = 1 / lengthKpc;
  // Stationary points of the density in ln r solve r³/L − 3r² + (ϖ/σ²) r − 1/σ² = 0; the
  // density is monotonic outside [smallest, largest] root, so stepping out from them is safe.
  const roots = positiveCubicRoots(-3 * lengthKpc, (lengthKpc * plx) / s2, -lengthKpc / s2);
  const xMin = Math.log(roots[0]);
  const xMax = Math.log(roots[roots.length - 1]);
  let peak = -Infinity;
  let xPeak = xMin;
  for (const r of roots) {
    const f = logDensityLnR(Math.log(r), plx, invTwoS2, invL);
    if (f > peak) {
      peak = f;
      xPeak = Math.log(r);
    }
  }
  // Width scale from the curvature at the peak: d²f/dx² = r²·H + r·dlnP/dr with dlnP/dr = −1/r
  // at a stationary point of f; H = d²lnP/dr² = −2/r² + (2ϖr − 3)/(σ² r⁴).
  const rp = Math.exp(xPeak);
  const h = -2 / (rp * rp) + (2 * plx * rp - 3) / (s2 * rp * rp * rp * rp);
  const curv = rp * rp * h - 1;
  let step = curv < 0 ? 1 / Math.sqrt(-curv) : 0.1;
  if (!(step > 1e-12) || !Number.isFinite(step)) step = 0.1;
  const threshold = peak - TAIL_LOG_DENSITY_DROP;

  const stepOut = (from: number, dir: 1 | -1): number => {
    let inner = from;
    let d = step;
    let outer = from + dir * d;
    for (let i = 0; i < 80 && logDensityLnR(outer, plx, invTwoS2, invL) > threshold; i++) {
      inner = outer;
      d *= 2;
      outer = from + dir * d;
    }
    for (let i = 0; i < 5; i++) {
      const mid = 0.5 * (inner + outer);
      if (logDensityLnR(mid, plx, invTwoS2, invL) > threshold) inner = mid;
      else outer = mid;
    }
    return outer;
  };
  const xLo = stepOut(xMin, -1);
  const xHi = stepOut(xMax, 1);

  const n = TABLE_SIZE;
  const dx = (xHi - xLo) / (n - 1);
  const cdf = new Float64Array(n);
  const w = new Float64Array(n);
  const f = scratchLogDensity;
  // r_i = e^{xLo + i·dx} by a running product (one exp per node instead of two).
  const ratio = Math.exp(dx);
  let r = Math.exp(xLo);
  for (let i = 0; i < n; i++) {
    const d = plx - 1 / r;
    f[i] = 3 * (xLo + i * dx) - r * invL - d * d * invTwoS2 - peak;
    w[i] = Math.exp(f[i]);
    r *= ratio;
  }
  // Cell masses: exact for a log-linear density, times (1 − f''·dx²/12), the leading correction
  // for the curvature of the log density (f'' from second differences), so node CDF values are
  // accurate to O(dx⁴) rather than O(dx²).
  let acc = 0;
  for (let i = 0; i < n - 1; i++) {
    const c0 = i > 0 ? f[i + 1] - 2 * f[i] + f[i - 1] : f[i + 2] - 2 * f[i + 1] + f[i];
    const c1 = i < n - 2 ? f[i + 2] - 2 * f[i + 1] + f[i] : c0;
    const mass = cellMass(w[i], w[i + 1], f[i + 1] - f[i], dx) * (1 - (c0 + c1) / 24);
    acc += mass > 0 ? mass : 0;
    cdf[i + 1] = acc;
  }
  const inv = 1 / acc;
  for (let i = 0; i < n; i++) cdf[i] *= inv;
  cdf[n - 1] = 1;
  return { xLo, dx, cdf, w };
}

/** Inverse CDF of a table at probability u in [0, 1], returning r in kpc. O(log n). */
function tableQuantileKpc(t: EdsdTable, u: number): number {
  const { cdf, w, dx } = t;
  let lo = 0;
  let hi = cdf.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >>> 1;
    if (cdf[mid] <= u) lo = mid;
    else hi = mid;
  }
  // Inside the cell the density is ∝ e^{k s} with e^{k·dx} = w[hi]/w[lo]: the share φ of the
  // cell's mass below s gives s = dx·ln(1 + φ(ρ − 1))/ln ρ, ρ = w[hi]/w[lo].
  const span = cdf[hi] - cdf[lo];
  const phi = span > 0 ? Math.min(1, Math.max(0, (u - cdf[lo]) / span)) : 0;
  const rho = w[lo] > 0 ? w[hi] / w[lo] : Infinity;
  let s: number;
  if (Number.isFinite(rho) && rho > 0 && Math.abs(rho - 1) > 1e-9) {
    s = (dx * Math.log1p(phi * (rho - 1))) / Math.log(rho);
  } else {
    s = phi * dx;
  }
  if (!(s >= 0)) s = 0;
  else if (s > dx) s = dx;
  return Math.exp(t.xLo + lo * dx + s);
}

/**
 * Percentile of the EDSD posterior in kpc (prob in [0, 1]), from the tabulated CDF.
 * The parallax is used as given (no zero point).
 */
export function edsdQuantileKpc(
  parallaxMas: number,
  parallaxErrMas: number,
  prob: number,
  lengthScaleKpc: number = EDSD_LENGTH_SCALE_KPC,
): number {
  assertParallaxInputs(parallaxMas, parallaxErrMas, lengthScaleKpc);
  return tableQuantileKpc(buildEdsdTable(parallaxMas, parallaxErrMas, lengthScaleKpc), prob);
}

export type DistanceMethod = 'inverse_parallax' | 'edsd_mode' | 'given';

export interface DistanceEstimate {
  distancePc: number;
  /** 16th percentile (or 1/(ϖ+σ) for inverse parallax), pc. */
  distanceLoPc: number;
  /** 84th percentile (or 1/(ϖ−σ) for inverse parallax), pc. */
  distanceHiPc: number;
  method: DistanceMethod;
}

export interface DistanceOptions {
  /** EDSD prior length scale, kpc (default 1.35). */
  lengthScaleKpc?: number;
  /** Apply the −0.017 mas global zero point (default true). */
  applyZeroPoint?: boolean;
}

/**
 * Distance from a parallax: apply the zero point (ϖ + 0.017 mas), then 1/ϖ with 1/(ϖ ± σ) when
 * ϖ/σ ≥ 5, else the EDSD posterior mode with its 16th and 84th percentiles (Bailer-Jones 2015).
 */
export function distanceFromParallax(
  parallaxMas: number,
  parallaxErrMas: number,
  opts: DistanceOptions = {},
): DistanceEstimate {
  const L = opts.lengthScaleKpc ?? EDSD_LENGTH_SCALE_KPC;
  assertParallaxInputs(parallaxMas, parallaxErrMas, L);
  const plx = opts.applyZeroPoint === false ? parallaxMas : correctParallax(parallaxMas);
  const sigma = parallaxErrMas;
  if (plx / sigma >= INVERSE_PARALLAX_MIN_SNR) {
    return {
      distancePc: 1000 / plx,
      distanceLoPc: 1000 / (plx + sigma),
      distanceHiPc: 1000 / (plx - sigma),
      method: 'inverse_parallax',
    };
  }
  const table = buildEdsdTable(plx, sigma, L);
  return {
    distancePc: 1000 * edsdModeKpc(plx, sigma, L),
    distanceLoPc: 1000 * tableQuantileKpc(table, 0.16),
    distanceHiPc: 1000 * tableQuantileKpc(table, 0.84),
    method: 'edsd_mode',
  };
}

/** A distance given directly (e.g. from a cluster), with ±σ as the 16/84 bounds (floored at 0). */
export function distanceFromDistance(distancePc: number, distanceErrPc: number): DistanceEstimate {
  if (!(distancePc > 0) || !Number.isFinite(distancePc)) {
    throw new RangeError(`distance ${distancePc} pc: expected a finite number > 0`);
  }
  if (!(distanceErrPc >= 0) || !Number.isFinite(distanceErrPc)) {
    throw new RangeError(`distance error ${distanceErrPc} pc: expected a finite number ≥ 0`);
  }
  return {
    distancePc,
    distanceLoPc: Math.max(0, distancePc - distanceErrPc),
    distanceHiPc: distancePc + distanceErrPc,
    method: 'given',
  };
}

/**
 * Sampler of distances in pc from the EDSD posterior (for every S/N; see the file header),
 * by inverse CDF on a 256-node table in ln r built once (a few µs); each draw is one uniform,
 * a binary search and one exp. The zero point is applied by default, like distanceFromParallax.
 */
export function makeDistanceSampler(
  parallaxMas: number,
  parallaxErrMas: number,
  lengthScaleKpc: number = EDSD_LENGTH_SCALE_KPC,
  opts: { applyZeroPoint?: boolean } = {},
): (rng: () => number) => number {
  assertParallaxInputs(parallaxMas, parallaxErrMas, lengthScaleKpc);
  const plx = opts.applyZeroPoint === false ? parallaxMas : correctParallax(parallaxMas);
  const table = buildEdsdTable(plx, parallaxErrMas, lengthScaleKpc);
  return (rng: () => number) => 1000 * tableQuantileKpc(table, rng());
}

import { describe, expect, it } from 'vitest';
import {
  correctParallax,
  distanceFromDistance,
  distanceFromParallax,
  EDSD_LENGTH_SCALE_KPC,
  edsdModeKpc,
  edsdQuantileKpc,
  makeDistanceSampler,
  PARALLAX_ZERO_POINT_MAS,
} from '../../server/science/distance.js';
import { mulberry32 } from '../../server/science/random.js';
import edsd from '../reference/fixtures/edsd.json';

const rows = edsd.rows as number[][];

describe('parallax zero point', () => {
  it('adds 0.017 mas (Lindegren et al. 2021: global offset −0.017 mas)', () => {
    expect(PARALLAX_ZERO_POINT_MAS).toBe(-0.017);
    expect(correctParallax(1)).toBeCloseTo(1.017, 15);
    expect(correctParallax(-0.017)).toBeCloseTo(0, 15);
  });
});

describe('edsdModeKpc', () => {
  it('solves r³/L − 2r² + (ϖ/σ²) r − 1/σ² = 0 (Bailer-Jones 2015) on a hand-checked case', () => {
    // ϖ = 1, σ = 0.5, L = 1.35: r = 1.5 gives 3.375/1.35 − 4.5 + 6 − 4 = 0 exactly.
    expect(edsdModeKpc(1, 0.5, 1.35)).toBeCloseTo(1.5, 12);
    expect(edsdModeKpc(2, 1, 1.35)).toBeCloseTo(1.5, 12);
    expect(EDSD_LENGTH_SCALE_KPC).toBe(1.35);
  });

  it('matches the scipy-maximised posterior for positive, zero and negative parallaxes', () => {
    // scipy 1.10 fixture: minimize_scalar(bounded, xatol 1e-12) on −ln P; on a flat maximum that
    // locates the mode to ~sqrt(machine ε) relative, hence 1e-7.
    expect(rows.some((r) => r[0] < 0)).toBe(true);
    for (const [plx, sig, mode] of rows) {
      expect(Math.abs(edsdModeKpc(plx, sig, edsd.lengthScaleKpc) / mode - 1)).toBeLessThan(1e-7);
    }
  });

  it('tends to 1/ϖ at high S/N and to 2L when the parallax carries no information', () => {
    // Common practice: the likelihood dominates at high S/N; the prior r² e^{−r/L} peaks at 2L.
    expect(Math.abs(edsdModeKpc(10, 0.001) / 0.1 - 1)).toBeLessThan(1e-4);
    expect(Math.abs(edsdModeKpc(0, 1000) / (2 * 1.35) - 1)).toBeLessThan(1e-4);
  });

  it('picks the higher maximum when the cubic has three positive roots', () => {
    // scipy 1.10 fixture rows whose mode cubic has three positive roots (counted by numpy.roots):
    // the mode is the nearer maximum in two of them and the farther one in the other two.
    const threeRoots = rows.filter((r) => r[8] === 3);
    expect(threeRoots.length).toBeGreaterThanOrEqual(4);
    const nearWins = threeRoots.filter(([plx, sig, mode]) => mode < 1 / plx + 3 * sig / plx ** 2);
    expect(nearWins.length).toBeGreaterThanOrEqual(1);
    expect(nearWins.length).toBeLessThan(threeRoots.length);
    for (const [plx, sig, mode] of threeRoots) {
      expect(Math.abs(edsdModeKpc(plx, sig, edsd.lengthScaleKpc) / mode - 1)).toBeLessThan(1e-7);
    }
  });

  it('rejects a non-positive parallax error', () => {
    expect(() => edsdModeKpc(1, 0)).toThrow(/parallax error 0 mas: expected a finite number > 0/);
    expect(() => edsdModeKpc(Number.NaN, 0.1)).toThrow(/expected a finite number/);
  });
});

describe('EDSD posterior percentiles', () => {
  it('match scipy quad + brentq percentiles to 2e-5 relative', () => {
    // scipy 1.10 fixture. The tabulated CDF (256 nodes in ln r) is accurate to ~4e-6 here.
    for (const [plx, sig, , q05, q16, q50, q84, q95] of rows) {
      for (const [prob, ref] of [
        [0.05, q05],
        [0.16, q16],
        [0.5, q50],
        [0.84, q84],
        [0.95, q95],
      ]) {
        expect(Math.abs(edsdQuantileKpc(plx, sig, prob, edsd.lengthScaleKpc) / ref - 1)).toBeLessThan(2e-5);
      }
    }
  });
});

describe('distanceFromParallax', () => {
  it('uses 1/ϖ with 1/(ϖ ± σ) when the corrected ϖ/σ ≥ 5', () => {
    const d = distanceFromParallax(2 - 0.017, 0.1);
    expect(d.method).toBe('inverse_parallax');
    expect(d.distancePc).toBeCloseTo(500, 10);
    expect(d.distanceLoPc).toBeCloseTo(1000 / 2.1, 10);
    expect(d.distanceHiPc).toBeCloseTo(1000 / 1.9, 10);
  });

  it('applies the zero point before the S/N test', () => {
    // Raw ϖ/σ = 4.983 < 5, corrected (0.5 + 0.017)/0.1 = 5.17 ≥ 5.
    expect(distanceFromParallax(0.4983, 0.1).method).toBe('inverse_parallax');
    expect(distanceFromParallax(0.4983, 0.1, { applyZeroPoint: false }).method).toBe('edsd_mode');
  });

  it('uses the EDSD mode and posterior 16/84 % below S/N 5', () => {
    // scipy 1.10 fixture row ϖ = 1, σ = 0.5 (no zero point).
    const row = rows.find((r) => r[0] === 1 && r[1] === 0.5)!;
    const d = distanceFromParallax(1, 0.5, { applyZeroPoint: false });
    expect(d.method).toBe('edsd_mode');
    expect(Math.abs(d.distancePc / (1000 * row[2]) - 1)).toBeLessThan(1e-7);
    expect(Math.abs(d.distanceLoPc / (1000 * row[4]) - 1)).toBeLessThan(2e-5);
    expect(Math.abs(d.distanceHiPc / (1000 * row[6]) - 1)).toBeLessThan(2e-5);
    expect(d.distanceLoPc).toBeLessThan(d.distancePc);
    expect(d.distanceHiPc).toBeGreaterThan(d.distancePc);
  });

  it('gives a finite, positive distance for a negative parallax', () => {
    const d = distanceFromParallax(-0.5, 0.3);
    expect(d.method).toBe('edsd_mode');
    expect(d.distancePc).toBeGreaterThan(1000);
    expect(d.distanceLoPc).toBeGreaterThan(0);
    expect(Number.isFinite(d.distanceHiPc)).toBe(true);
  });

  it('honours a different prior length scale', () => {
    const a = distanceFromParallax(0.2, 0.3, { lengthScaleKpc: 0.5 });
    const b = distanceFromParallax(0.2, 0.3, { lengthScaleKpc: 3 });
    expect(a.distancePc).toBeLessThan(b.distancePc);
  });
});

describe('distanceFromDistance', () => {
  it('passes a given distance through with ±σ bounds', () => {
    expect(distanceFromDistance(400, 30)).toEqual({ distancePc: 400, distanceLoPc: 370, distanceHiPc: 430, method: 'given' });
    expect(distanceFromDistance(100, 150).distanceLoPc).toBe(0);
    expect(() => distanceFromDistance(-1, 1)).toThrow(/distance -1 pc/);
  });
});

describe('makeDistanceSampler', () => {
  it('draws from the EDSD posterior: empirical percentiles match scipy', () => {
    // scipy 1.10 fixture; 100,000 draws: the 16/50/84 % quantiles have a binomial standard error
    // of sqrt(q(1−q)/n)/density ≈ 0.4 % of the spread or less; allow 1 % of the 16–84 % width.
    const rng = mulberry32(77);
    for (const [plx, sig, , , q16, q50, q84] of rows.filter((_, i) => i % 4 === 0)) {
      const draw = makeDistanceSampler(plx, sig, edsd.lengthScaleKpc, { applyZeroPoint: false });
      const xs = Float64Array.from({ length: 100_000 }, () => draw(rng)).sort();
      const at = (q: number) => xs[Math.floor(q * xs.length)] / 1000;
      const width = q84 - q16;
      expect(Math.abs(at(0.16) - q16)).toBeLessThan(0.01 * width);
      expect(Math.abs(at(0.5) - q50)).toBeLessThan(0.01 * width);
      expect(Math.abs(at(0.84) - q84)).toBeLessThan(0.01 * width);
    }
  });

  it('agrees with distanceFromParallax: same zero point, median inside the reported range', () => {
    const rng = mulberry32(3);
    for (const [plx, sig] of [
      [2, 0.1],
      [0.8, 0.15],
      [0.3, 0.3],
    ]) {
      const d = distanceFromParallax(plx, sig);
      const draw = makeDistanceSampler(plx, sig);
      const xs = Float64Array.from({ length: 20_000 }, () => draw(rng)).sort();
      const median = xs[10_000];
      expect(median).toBeGreaterThan(d.distanceLoPc);
      expect(median).toBeLessThan(d.distanceHiPc);
    }
  });

  it('pulls very distant high-S/N stars nearer than 1/ϖ (the prior, as documented)', () => {
    // ϖ = 0.05 mas, σ = 0.01 (S/N 5, 1/ϖ = 20 kpc ≫ L): the median falls below 1/(ϖ + σ).
    expect(edsdQuantileKpc(0.05, 0.01, 0.5)).toBeLessThan(1 / 0.06);
    expect(distanceFromParallax(0.05 - 0.017, 0.01).method).toBe('inverse_parallax');
  });

  it('is deterministic given the generator and returns positive finite distances', () => {
    const a = makeDistanceSampler(0.5, 0.2);
    const r1 = mulberry32(8);
    const r2 = mulberry32(8);
    for (let i = 0; i < 1000; i++) {
      const x = a(r1);
      expect(x).toBe(a(r2));
      expect(x).toBeGreaterThan(0);
      expect(Number.isFinite(x)).toBe(true);
    }
    // Extremes of the uniform map inside the tabulated range.
    expect(Number.isFinite(a(() => 0))).toBe(true);
    expect(Number.isFinite(a(() => 1 - 2 ** -53))).toBe(true);
  });
});

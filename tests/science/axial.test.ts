import { describe, expect, it } from 'vitest';
import {
  angleDifferenceDeg,
  axialCircularStdDeg,
  axialMean,
  axialMeanDeg,
  axialResultantLength,
  wrapAngle180,
} from '../../server/science/axial.js';
import axialFixture from '../reference/fixtures/axial.json';

describe('wrapAngle180 and angleDifferenceDeg', () => {
  it('wraps into [0, 180)', () => {
    expect(wrapAngle180(0)).toBe(0);
    expect(wrapAngle180(180)).toBe(0);
    expect(wrapAngle180(-10)).toBe(170);
    expect(wrapAngle180(370)).toBe(10);
    expect(wrapAngle180(-180)).toBe(0);
    expect(wrapAngle180(-1e-15)).toBeLessThan(180);
  });

  it('wraps a − b into (−90, 90]', () => {
    expect(angleDifferenceDeg(10, 170)).toBe(20);
    expect(angleDifferenceDeg(170, 10)).toBe(-20);
    expect(angleDifferenceDeg(100, 10)).toBe(90);
    expect(angleDifferenceDeg(10, 100)).toBe(90);
    expect(angleDifferenceDeg(45, 45)).toBe(0);
    expect(angleDifferenceDeg(0, 179)).toBeCloseTo(1, 12);
    expect(angleDifferenceDeg(60, 0)).toBe(60);
  });
});

describe('axial mean, resultant length and circular std vs scipy', () => {
  // scipy 1.10 fixture: scipy.stats.circmean / circstd of 2θ (radians), halved.
  for (const [i, s] of axialFixture.samples.entries()) {
    it(`sample ${i} (n = ${s.anglesDeg.length})`, () => {
      const mean = axialMeanDeg(s.anglesDeg);
      expect(Math.abs(angleDifferenceDeg(mean, s.meanDeg))).toBeLessThan(1e-9);
      expect(axialResultantLength(s.anglesDeg)).toBeCloseTo(s.resultantLength, 12);
      expect(Math.abs(axialCircularStdDeg(s.anglesDeg) - s.stdDeg)).toBeLessThan(1e-9 * Math.max(1, s.stdDeg));
    });
  }
});

describe('axial statistics: structure', () => {
  it('treats θ and θ + 180° as the same orientation', () => {
    const a = [10, 20, 175, 5];
    const b = [190, -160, -5, 365];
    expect(axialMeanDeg(b)).toBeCloseTo(axialMeanDeg(a), 12);
    expect(axialCircularStdDeg(b)).toBeCloseTo(axialCircularStdDeg(a), 12);
  });

  it('averages across the 0/180 wrap (not to 90°)', () => {
    expect(Math.abs(angleDifferenceDeg(axialMeanDeg([175, 5]), 0))).toBeLessThan(1e-12);
    expect(axialMeanDeg([170, 178, 4])).toBeCloseTo(wrapAngle180((170 + 178 + 184) / 3), 1);
  });

  it('weights act like repeated angles (integer weights = replication)', () => {
    // Common practice: a weight w_i counts an angle w_i times.
    const angles = [12, 40, 170, 95];
    const weights = [3, 1, 2, 1];
    const replicated = angles.flatMap((a, i) => Array(weights[i]).fill(a) as number[]);
    expect(axialMeanDeg(angles, weights)).toBeCloseTo(axialMeanDeg(replicated), 12);
    expect(axialResultantLength(angles, weights)).toBeCloseTo(axialResultantLength(replicated), 12);
    expect(axialCircularStdDeg(angles, weights)).toBeCloseTo(axialCircularStdDeg(replicated), 12);
    // A zero weight drops an angle.
    expect(axialMeanDeg([30, 120], [1, 0])).toBeCloseTo(30, 12);
  });

  it('gives R = 1 and std 0 for identical angles, R ≈ 0 for orthogonal pairs', () => {
    expect(axialResultantLength([33, 33, 213])).toBeCloseTo(1, 15);
    expect(axialCircularStdDeg([33, 33, 213])).toBe(0);
    // Small but resolvable spread: angles ±δ give std ≈ δ (R = cos 2δ); δ = 5e-5°. Spreads below
    // ~2e-6° are rounded to 0 (1 − R is then at the rounding level of R).
    expect(Math.abs(axialCircularStdDeg([33, 33 + 1e-4]) / 5e-5 - 1)).toBeLessThan(1e-3);
    expect(axialResultantLength([0, 90])).toBeLessThan(1e-15);
  });

  it('matches ½·sqrt(−2 ln R) for two angles 2δ apart: R = cos 2δ', () => {
    // Mardia & Jupp 2000: for doubled angles ±2δ the resultant is cos 2δ.
    const d = 15;
    const r = Math.cos((2 * d * Math.PI) / 180);
    expect(axialResultantLength([50 - d, 50 + d])).toBeCloseTo(r, 14);
    expect(axialCircularStdDeg([50 - d, 50 + d])).toBeCloseTo((0.5 * Math.sqrt(-2 * Math.log(r)) * 180) / Math.PI, 12);
  });

  it('has no mean for exactly opposed orientations: NaN with a reason, not 45°', () => {
    // Mardia & Jupp 2000 §9.3: the mean direction is undefined when the resultant is zero;
    // 0° and 90° are opposite as doubled angles (0° and 180°), so they cancel exactly.
    for (const angles of [[0, 90], [30, 120], [10, 100, 55, 145], [0, 60, 120]]) {
      const m = axialMean(angles);
      expect(Number.isNaN(m.meanDeg)).toBe(true);
      expect(m.undefinedReason).toMatch(/no mean orientation/);
      expect(Number.isNaN(axialMeanDeg(angles))).toBe(true);
    }
    expect(Number.isNaN(axialMeanDeg([0, 90], [2, 2]))).toBe(true);
    // Nearly opposed is still defined: 0° and 89.9° have R = sin(0.2°)/... ≈ 1.7e-3.
    const near = axialMean([0, 89.9]);
    expect(near.undefinedReason).toBeUndefined();
    expect(near.meanDeg).toBeCloseTo(44.95, 9);
  });

  it('rejects empty input and mismatched or negative weights', () => {
    expect(() => axialMeanDeg([])).toThrow(/at least one angle/);
    expect(() => axialMeanDeg([1, 2], [1])).toThrow(/one weight per angle/);
    expect(() => axialMeanDeg([1, 2], [1, -1])).toThrow(/expected a number ≥ 0/);
    expect(() => axialMeanDeg([1, 2], [0, 0])).toThrow(/sum to zero/);
  });
});

import { describe, expect, it } from 'vitest';
import { debiasedFractionMAS, debiasedFractionWardleKronberg } from '../../server/science/debias.js';

describe('debiasedFractionMAS (Plaszczynski et al. 2014)', () => {
  it('follows p − σ²(1 − e^{−p²/σ²})/(2p) on a hand-computed value', () => {
    // p = 2σ: 2 − (1 − e^{−4})/4 = 2 − 0.2454210 = 1.7545790 (in units of σ).
    expect(debiasedFractionMAS(0.002, 0.001)).toBeCloseTo(0.001 * (2 - (1 - Math.exp(-4)) / 4), 15);
    expect(debiasedFractionMAS(0.002, 0.001)).toBeCloseTo(0.0017545790, 9);
  });

  it('tends to p − σ²/(2p) at high S/N', () => {
    // The exponential term is e^{−100} at p/σ = 10: the two agree to rounding.
    const [p, s] = [0.05, 0.005];
    expect(debiasedFractionMAS(p, s)).toBeCloseTo(p - (s * s) / (2 * p), 15);
    // And the bias correction is small relative to p: σ²/(2p²) = 0.5 %.
    expect(1 - debiasedFractionMAS(p, s) / p).toBeCloseTo(0.005, 12);
  });

  it('tends to 0 as p → 0 (like p/2: p − σ²·(p²/σ²)/(2p) = p/2)', () => {
    const s = 0.01;
    for (const p of [1e-3, 1e-5, 1e-8]) {
      expect(debiasedFractionMAS(p, s)).toBeGreaterThanOrEqual(0);
      expect(Math.abs(debiasedFractionMAS(p, s) / (p / 2) - 1)).toBeLessThan(0.02);
    }
    expect(debiasedFractionMAS(0, s)).toBe(0);
  });

  it('is never negative, never above p, and increases with p', () => {
    const s = 0.003;
    let prev = -1;
    for (let i = 0; i <= 2000; i++) {
      const p = i * 1e-5;
      const m = debiasedFractionMAS(p, s);
      expect(m).toBeGreaterThanOrEqual(0);
      expect(m).toBeLessThanOrEqual(p);
      expect(m).toBeGreaterThanOrEqual(prev);
      prev = m;
    }
  });

  it('returns p unchanged when σ = 0', () => {
    expect(debiasedFractionMAS(0.02, 0)).toBe(0.02);
  });
});

describe('debiasedFractionWardleKronberg (Wardle & Kronberg 1974)', () => {
  it('is sqrt(p² − σ²), and 0 below σ', () => {
    expect(debiasedFractionWardleKronberg(0.005, 0.003)).toBeCloseTo(0.004, 15);
    expect(debiasedFractionWardleKronberg(0.003, 0.003)).toBe(0);
    expect(debiasedFractionWardleKronberg(0.001, 0.003)).toBe(0);
  });
});

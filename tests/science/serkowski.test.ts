import { describe, expect, it } from 'vitest';
import {
  BAND_EFFECTIVE_WAVELENGTH_UM,
  exceedsPolarizationEfficiency,
  POLARIZATION_EFFICIENCY_MAX_PCT_PER_MAG,
  scaleFractionToBand,
  serkowskiFraction,
  SERKOWSKI_K,
  whittetK,
} from '../../server/science/serkowski.js';

describe('Serkowski law', () => {
  it('peaks at λmax with p_max and falls as exp(−K ln²(λmax/λ))', () => {
    // Serkowski, Mathewson & Ford 1975: K = 1.15.
    expect(SERKOWSKI_K).toBe(1.15);
    expect(serkowskiFraction(0.03, 0.55, 0.55)).toBe(0.03);
    const l = Math.log(0.55 / 0.44);
    expect(serkowskiFraction(0.03, 0.44, 0.55)).toBeCloseTo(0.03 * Math.exp(-1.15 * l * l), 15);
    // Symmetric in ln λ: λ = λmax·e^{±a} give the same p.
    expect(serkowskiFraction(1, 0.55 * Math.E, 0.55)).toBeCloseTo(serkowskiFraction(1, 0.55 / Math.E, 0.55), 14);
    expect(serkowskiFraction(1, 0.55 * Math.E, 0.55)).toBeCloseTo(Math.exp(-1.15), 14);
  });

  it('has the Whittet et al. 1992 K(λmax) = 0.01 + 1.66 λmax', () => {
    expect(whittetK(0.55)).toBeCloseTo(0.923, 12);
    expect(whittetK(0.6)).toBeCloseTo(1.006, 12);
  });

  it('uses the Johnson–Cousins effective wavelengths (Bessell 1990, from memory)', () => {
    expect(BAND_EFFECTIVE_WAVELENGTH_UM).toEqual({ U: 0.36, B: 0.44, V: 0.55, R: 0.64, I: 0.79 });
  });
});

describe('scaleFractionToBand', () => {
  it('scales B → V with λmax = 0.55 µm by 1/exp(−1.15 ln²(1.25)) (hand-computed 1/0.944346)', () => {
    expect(scaleFractionToBand(0.02, 'B', 'V')).toBeCloseTo(0.02 / 0.944346, 6);
    expect(scaleFractionToBand(0.02, 'V', 'V')).toBe(0.02);
  });

  it('round-trips and composes between bands', () => {
    const p = 0.031;
    expect(scaleFractionToBand(scaleFractionToBand(p, 'U', 'I', 0.6), 'I', 'U', 0.6)).toBeCloseTo(p, 15);
    const direct = scaleFractionToBand(p, 'B', 'R', 0.5, { kLaw: 'whittet' });
    const viaV = scaleFractionToBand(scaleFractionToBand(p, 'B', 'V', 0.5, { kLaw: 'whittet' }), 'V', 'R', 0.5, {
      kLaw: 'whittet',
    });
    expect(direct).toBeCloseTo(viaV, 15);
  });

  it('differs between the K laws when λmax ≠ the crossing point', () => {
    // K = 1.15 vs K = 0.923 at λmax = 0.55: a steeper law moves p more between bands.
    const serk = scaleFractionToBand(0.02, 'U', 'V');
    const whit = scaleFractionToBand(0.02, 'U', 'V', 0.55, { kLaw: 'whittet' });
    expect(serk).toBeGreaterThan(whit);
  });

  it('rejects an unknown band', () => {
    expect(() => scaleFractionToBand(0.02, 'K' as never, 'V')).toThrow(/band "K": expected one of U, B, V, R, I/);
  });
});

describe('exceedsPolarizationEfficiency', () => {
  it('flags p/E(B−V) above 9.0 %/mag (Serkowski et al. 1975)', () => {
    expect(POLARIZATION_EFFICIENCY_MAX_PCT_PER_MAG).toBe(9);
    expect(exceedsPolarizationEfficiency(0.045, 0.5)).toBe(false); // exactly 9 %/mag
    expect(exceedsPolarizationEfficiency(0.0451, 0.5)).toBe(true);
    expect(exceedsPolarizationEfficiency(0.01, 0.3)).toBe(false);
    expect(exceedsPolarizationEfficiency(0.01, 0)).toBe(true);
    expect(exceedsPolarizationEfficiency(0, 0)).toBe(false);
    expect(exceedsPolarizationEfficiency(Number.NaN, 0.2)).toBe(false);
  });
});

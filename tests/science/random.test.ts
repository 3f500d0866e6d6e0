import { describe, expect, it } from 'vitest';
import { gaussian, hashSeed, mulberry32 } from '../../server/science/random.js';

describe('mulberry32', () => {
  it('is deterministic for a seed and differs between seeds', () => {
    const a = mulberry32(42);
    const b = mulberry32(42);
    const c = mulberry32(43);
    const xs = Array.from({ length: 5 }, () => a());
    expect(Array.from({ length: 5 }, () => b())).toEqual(xs);
    expect(Array.from({ length: 5 }, () => c())).not.toEqual(xs);
  });

  it('reproduces the reference mulberry32 output for seed 1', () => {
    // First three outputs of the public-domain mulberry32 reference code for seed 1 (from
    // memory); seeded demo data depends on this sequence staying fixed.
    const rng = mulberry32(1);
    const got = [rng(), rng(), rng()];
    expect(got).toEqual(PINNED_SEED_1);
  });

  it('stays in [0, 1) with the moments of a uniform distribution', () => {
    // Uniform: mean 1/2, variance 1/12 (common practice); tolerance 5 standard errors.
    const rng = mulberry32(7);
    const n = 200_000;
    let sum = 0;
    let sum2 = 0;
    let min = 1;
    let max = 0;
    for (let i = 0; i < n; i++) {
      const x = rng();
      sum += x;
      sum2 += x * x;
      min = Math.min(min, x);
      max = Math.max(max, x);
    }
    const mean = sum / n;
    const variance = sum2 / n - mean * mean;
    expect(min).toBeGreaterThanOrEqual(0);
    expect(max).toBeLessThan(1);
    expect(Math.abs(mean - 0.5)).toBeLessThan(5 * Math.sqrt(1 / 12 / n));
    expect(Math.abs(variance - 1 / 12)).toBeLessThan(5 * Math.sqrt(1 / 180 / n));
  });
});

const PINNED_SEED_1 = [0.6270739405881613, 0.002735721180215478, 0.5274470399599522];

describe('gaussian', () => {
  it('has mean 0, variance 1, and normal tail fractions', () => {
    // Standard normal: P(|z| > 1) = 0.3173, P(|z| > 2) = 0.0455, kurtosis 3 (common practice).
    const rng = mulberry32(2024);
    const n = 200_000;
    let s1 = 0;
    let s2 = 0;
    let s4 = 0;
    let over1 = 0;
    let over2 = 0;
    for (let i = 0; i < n; i++) {
      const z = gaussian(rng);
      s1 += z;
      s2 += z * z;
      s4 += z ** 4;
      if (Math.abs(z) > 1) over1++;
      if (Math.abs(z) > 2) over2++;
    }
    expect(Math.abs(s1 / n)).toBeLessThan(5 / Math.sqrt(n));
    expect(Math.abs(s2 / n - 1)).toBeLessThan(5 * Math.sqrt(2 / n));
    expect(Math.abs(s4 / n - 3)).toBeLessThan(5 * Math.sqrt(96 / n));
    expect(Math.abs(over1 / n - 0.3173)).toBeLessThan(5 * Math.sqrt((0.3173 * 0.6827) / n));
    expect(Math.abs(over2 / n - 0.0455)).toBeLessThan(5 * Math.sqrt((0.0455 * 0.9545) / n));
  });

  it('never returns a non-finite value, even if the generator returns 0', () => {
    let k = 0;
    const zeros = () => (k++ % 2 === 0 ? 0 : 0.25);
    expect(Number.isFinite(gaussian(zeros))).toBe(true);
  });
});

describe('hashSeed', () => {
  it('is a deterministic unsigned 32-bit integer', () => {
    const s = hashSeed('field', 3, 'V');
    expect(s).toBe(hashSeed('field', 3, 'V'));
    expect(Number.isInteger(s)).toBe(true);
    expect(s).toBeGreaterThanOrEqual(0);
    expect(s).toBeLessThan(2 ** 32);
  });

  it('separates parts, so different splits of the same text give different seeds', () => {
    const seeds = new Set([
      hashSeed('field', 3),
      hashSeed('field3'),
      hashSeed('fiel', 'd3'),
      hashSeed('field', '3'),
      hashSeed(3, 'field'),
      hashSeed(),
    ]);
    expect(seeds.size).toBe(6);
  });

  it('spreads consecutive inputs over the 32-bit range (no collisions in 10,000)', () => {
    const seen = new Set<number>();
    let high = 0;
    for (let i = 0; i < 10_000; i++) {
      const s = hashSeed('star', i);
      seen.add(s);
      if (s >= 2 ** 31) high++;
    }
    expect(seen.size).toBe(10_000);
    // Top bit set in about half (binomial, 5 sigma = 250).
    expect(Math.abs(high - 5000)).toBeLessThan(250);
  });
});

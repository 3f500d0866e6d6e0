import { describe, expect, it } from 'vitest';
import { chi2SurvivalProbability, lnGamma, regularizedGammaQ } from '../../server/science/chi2.js';
import chi2 from '../reference/fixtures/chi2.json';

describe('lnGamma', () => {
  it('matches exact values at integers and half-integers to 1e-14 relative', () => {
    // Γ(n) = (n − 1)!, Γ(½) = √π, Γ(n + ½) = (2n)!·√π/(4^n n!) (exact identities).
    let fact = 1;
    for (let n = 1; n <= 30; n++) {
      if (n > 1) fact *= n - 1;
      expect(Math.abs(lnGamma(n) - Math.log(fact))).toBeLessThan(1e-14 * Math.max(1, Math.abs(Math.log(fact))));
    }
    expect(lnGamma(0.5)).toBeCloseTo(0.5 * Math.log(Math.PI), 14);
    expect(lnGamma(2.5)).toBeCloseTo(Math.log(0.75 * Math.sqrt(Math.PI)), 14);
    expect(lnGamma(100)).toBeCloseTo(359.1342053695754, 11); // ln(99!): scipy 1.10 special.gammaln(100)
  });
});

describe('chi2SurvivalProbability vs scipy', () => {
  const rows = chi2.rows as [number, number, number][];

  it('matches scipy.stats.chi2.sf to 1e-10 relative for tail values down to 1e-12', () => {
    // scipy 1.10 fixture.
    let checked = 0;
    for (const [x, dof, sf] of rows) {
      if (sf < 1e-12) continue;
      expect(Math.abs(chi2SurvivalProbability(x, dof) / sf - 1)).toBeLessThan(1e-10);
      checked++;
    }
    expect(checked).toBeGreaterThan(250);
    expect(Math.min(...rows.map((r) => r[2]))).toBeLessThan(1e-12);
  });

  it('stays accurate (1e-9 relative) in the deeper fixture tail below 1e-12', () => {
    // scipy 1.10 fixture; sf down to 1e-14.
    for (const [x, dof, sf] of rows.filter((r) => r[2] < 1e-12)) {
      expect(Math.abs(chi2SurvivalProbability(x, dof) / sf - 1)).toBeLessThan(1e-9);
    }
  });

  it('has the closed forms for 2 dof (e^{−x/2}) and 1 dof (erfc)', () => {
    // Q(1, x/2) = e^{−x/2} exactly (textbook).
    for (const x of [0.1, 1, 5, 20, 60]) {
      expect(chi2SurvivalProbability(x, 2) / Math.exp(-x / 2)).toBeCloseTo(1, 13);
    }
    // 1 dof: P(χ² > 1) = P(|z| > 1) = 0.31731050786291 (common practice).
    expect(chi2SurvivalProbability(1, 1)).toBeCloseTo(0.31731050786291, 12);
  });

  it('handles the edges and rejects bad input', () => {
    expect(chi2SurvivalProbability(0, 4)).toBe(1);
    expect(chi2SurvivalProbability(-1, 4)).toBe(1);
    expect(chi2SurvivalProbability(Infinity, 4)).toBe(0);
    expect(regularizedGammaQ(3, 0)).toBe(1);
    expect(() => chi2SurvivalProbability(1, 0)).toThrow(/degrees of freedom/);
    expect(() => chi2SurvivalProbability(Number.NaN, 2)).toThrow(/NaN/);
  });

  it('is monotonic decreasing in χ²', () => {
    let prev = 1;
    for (let x = 0; x < 100; x += 0.25) {
      const q = chi2SurvivalProbability(x, 10);
      expect(q).toBeLessThanOrEqual(prev);
      prev = q;
    }
  });
});

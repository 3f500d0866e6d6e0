import { describe, expect, it } from 'vitest';
import { combineMeasurements } from '../../server/science/combine.js';

describe('combineMeasurements', () => {
  it('reproduces a hand-computed two-measurement example', () => {
    // q: weights 1e6 and 2.5e5 → q̄ = (0.010·1e6 + 0.012·2.5e5)/1.25e6 = 0.0104, σ = 1/√1.25e6.
    // u: equal weights 2.5e5 → ū = 0.019, σ = 1/√5e5.
    // χ² = 0.4²/1 + 1.6²/4 + 1²/4 + 1²/4 (in units of 1e-3) = 0.16 + 0.64 + 0.25 + 0.25 = 1.3;
    // ν = 2, P = e^{−0.65} = 0.522046.
    const c = combineMeasurements([
      { q: 0.01, u: 0.02, qErr: 0.001, uErr: 0.002 },
      { q: 0.012, u: 0.018, qErr: 0.002, uErr: 0.002 },
    ]);
    expect(c.q).toBeCloseTo(0.0104, 15);
    expect(c.u).toBeCloseTo(0.019, 15);
    expect(c.qErr).toBeCloseTo(1 / Math.sqrt(1.25e6), 15);
    expect(c.uErr).toBeCloseTo(1 / Math.sqrt(5e5), 15);
    expect(c.chi2).toBeCloseTo(1.3, 12);
    expect(c.dof).toBe(2);
    expect(c.n).toBe(2);
    expect(c.tailProbability).toBeCloseTo(Math.exp(-0.65), 12);
    expect(c.tailProbability).toBeCloseTo(0.522046, 6);
    expect(c.inconsistent).toBe(false);
    expect(c.p).toBeCloseTo(Math.sqrt(0.0104 ** 2 + 0.019 ** 2), 15);
    expect(c.thetaDeg).toBeCloseTo((0.5 * Math.atan2(0.019, 0.0104) * 180) / Math.PI, 12);
    expect(c.pDebiased).toBeLessThan(c.p);
    expect(c.pDebiased).toBeGreaterThan(c.p - c.pErr);
  });

  it('flags a star whose χ² tail probability is below 0.001 (ν = 2: χ² > 13.8155)', () => {
    // Two equal-error measurements differing by Δ in q only: χ² = Δ²/(2σ²); P = e^{−χ²/2}.
    const s = 0.001;
    const make = (chi2: number) => {
      const delta = s * Math.sqrt(2 * chi2);
      return combineMeasurements([
        { q: 0.02, u: 0.01, qErr: s, uErr: s },
        { q: 0.02 + delta, u: 0.01, qErr: s, uErr: s },
      ]);
    };
    expect(make(13.7).inconsistent).toBe(false);
    expect(make(13.9).inconsistent).toBe(true);
    expect(make(13.9).chi2).toBeCloseTo(13.9, 10);
    expect(make(13.9).tailProbability).toBeCloseTo(Math.exp(-13.9 / 2), 14);
  });

  it('counts 2(n − 1) degrees of freedom and is order independent', () => {
    const ms = [
      { q: 0.01, u: -0.002, qErr: 0.001, uErr: 0.0011 },
      { q: 0.0112, u: -0.0005, qErr: 0.0015, uErr: 0.0014 },
      { q: 0.0093, u: -0.0021, qErr: 0.0009, uErr: 0.001 },
      { q: 0.0101, u: -0.0012, qErr: 0.002, uErr: 0.0019 },
    ];
    const a = combineMeasurements(ms);
    const b = combineMeasurements([...ms].reverse());
    expect(a.dof).toBe(6);
    expect(b.q).toBeCloseTo(a.q, 16);
    expect(b.chi2).toBeCloseTo(a.chi2, 12);
    // The combined error is below the best single error.
    expect(a.qErr).toBeLessThan(0.0009);
  });

  it('passes a single measurement through with ν = 0 and tail probability 1', () => {
    const c = combineMeasurements([{ q: 0.01, u: 0.02, qErr: 0.001, uErr: 0.001 }]);
    expect(c).toMatchObject({ q: 0.01, u: 0.02, qErr: 0.001, uErr: 0.001, n: 1, dof: 0, chi2: 0 });
    expect(c.tailProbability).toBe(1);
    expect(c.inconsistent).toBe(false);
  });

  it('rejects empty input and non-positive errors, naming the measurement', () => {
    expect(() => combineMeasurements([])).toThrow(/no measurements/);
    expect(() =>
      combineMeasurements([
        { q: 0.01, u: 0.02, qErr: 0.001, uErr: 0.001 },
        { q: 0.01, u: 0.02, qErr: 0, uErr: 0.001 },
      ]),
    ).toThrow(/measurement 1: qErr = 0; expected a finite number > 0/);
  });
});

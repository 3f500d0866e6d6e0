import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  angleIsNonGaussian,
  polarizationAngleDeg,
  polarizationFraction,
  propagateStokesErrors,
  stokesFromFractionAngle,
} from '../../server/science/polarization.js';
import { gaussian, mulberry32 } from '../../server/science/random.js';

describe('polarizationFraction and polarizationAngleDeg', () => {
  it('gives p = sqrt(q² + u²) and θ = ½ atan2(u, q) on the four axes', () => {
    // IAU convention: +q is north–south (0°), +u is 45° east of north (common practice).
    expect(polarizationFraction(0.03, 0.04)).toBeCloseTo(0.05, 15);
    expect(polarizationAngleDeg(0.01, 0)).toBe(0);
    expect(polarizationAngleDeg(0, 0.01)).toBeCloseTo(45, 12);
    expect(polarizationAngleDeg(-0.01, 0)).toBeCloseTo(90, 12);
    expect(polarizationAngleDeg(0, -0.01)).toBeCloseTo(135, 12);
    // Just below the +q axis wraps to just below 180°; a negative angle that rounds to −0 or
    // to 180 exactly comes back as 0.
    expect(polarizationAngleDeg(0.01, -1e-4)).toBeCloseTo(180 - (0.5 * Math.atan2(1e-4, 0.01) * 180) / Math.PI, 12);
    expect(polarizationAngleDeg(0.01, -1e-18)).toBe(0);
  });

  it('keeps θ in [0, 180) and reproduces (q, u) from (p, θ)', () => {
    fc.assert(
      fc.property(fc.double({ min: -1, max: 1, noNaN: true }), fc.double({ min: -1, max: 1, noNaN: true }), (q, u) => {
        const t = polarizationAngleDeg(q, u);
        expect(t).toBeGreaterThanOrEqual(0);
        expect(t).toBeLessThan(180);
        const p = polarizationFraction(q, u);
        const rad = (2 * t * Math.PI) / 180;
        expect(Math.abs(p * Math.cos(rad) - q)).toBeLessThan(1e-12);
        expect(Math.abs(p * Math.sin(rad) - u)).toBeLessThan(1e-12);
      }),
    );
  });
});

describe('propagateStokesErrors', () => {
  it('equals σp = σ and σθ = 28.65°·σ/p when σq = σu (Serkowski 1962)', () => {
    for (const [q, u, s] of [
      [0.02, 0.01, 0.001],
      [-0.005, 0.03, 0.0007],
      [0, -0.01, 0.002],
    ]) {
      const r = propagateStokesErrors(q, u, s, s);
      const p = Math.hypot(q, u);
      expect(r.p).toBeCloseTo(p, 15);
      expect(r.pErr).toBeCloseTo(s, 15);
      // 28.65° = 90°/π (Serkowski 1962, Adv. Astron. Astrophys. 1, 289).
      expect(r.thetaErrDeg).toBeCloseTo((90 / Math.PI) * (s / p), 12);
      expect(Math.abs(r.thetaErrDeg - (28.65 * s) / p)).toBeLessThan(1e-4 * r.thetaErrDeg);
    }
  });

  it('matches the general formulas on a hand-computed anisotropic case', () => {
    // q = 0.03, u = 0.04, σq = 0.001, σu = 0.002, p = 0.05:
    // σp² = (9e-4·1e-6 + 16e-4·4e-6)/25e-4 = 2.92e-6 → σp = 1.708801e-3;
    // σθ = ½·sqrt(16e-4·1e-6 + 9e-4·4e-6)/25e-4 = ½·sqrt(5.2e-9)/25e-4 = 0.0144222 rad = 0.826332°.
    const r = propagateStokesErrors(0.03, 0.04, 0.001, 0.002);
    expect(r.pErr).toBeCloseTo(Math.sqrt(2.92e-6), 14);
    expect(r.thetaErrDeg).toBeCloseTo((0.5 * Math.sqrt(5.2e-9) / 25e-4) * (180 / Math.PI), 12);
    expect(r.thetaErrDeg).toBeCloseTo(0.826332, 5);
    expect(r.thetaDeg).toBeCloseTo((0.5 * Math.atan2(0.04, 0.03) * 180) / Math.PI, 12);
  });

  it('agrees with a Monte Carlo at high S/N (linear propagation holds there)', () => {
    // p/σ ≈ 50: the distributions are close to Gaussian (Naghizadeh-Khouei & Clarke 1993).
    const rng = mulberry32(11);
    const [q0, u0, sq, su] = [0.02, -0.03, 0.0006, 0.0009];
    const n = 40_000;
    const ps: number[] = [];
    const ts: number[] = [];
    for (let i = 0; i < n; i++) {
      const q = q0 + sq * gaussian(rng);
      const u = u0 + su * gaussian(rng);
      ps.push(Math.hypot(q, u));
      ts.push((0.5 * Math.atan2(u, q) * 180) / Math.PI);
    }
    const std = (xs: number[]) => {
      const m = xs.reduce((a, b) => a + b, 0) / xs.length;
      return Math.sqrt(xs.reduce((a, b) => a + (b - m) ** 2, 0) / (xs.length - 1));
    };
    const r = propagateStokesErrors(q0, u0, sq, su);
    // Sample std has relative standard error 1/sqrt(2n) = 0.35 %; allow 2 % (nonlinearity + noise).
    expect(Math.abs(std(ps) / r.pErr - 1)).toBeLessThan(0.02);
    expect(Math.abs(std(ts) / r.thetaErrDeg - 1)).toBeLessThan(0.02);
  });

  it('returns a finite, uninformative angle error at p = 0', () => {
    const r = propagateStokesErrors(0, 0, 0.001, 0.001);
    expect(r.p).toBe(0);
    expect(r.pErr).toBeCloseTo(0.001, 15);
    expect(r.thetaErrDeg).toBe(90);
  });
});

describe('stokesFromFractionAngle', () => {
  it('gives q = p cos 2θ, u = p sin 2θ', () => {
    const s = stokesFromFractionAngle(0.05, 0, 30, 0);
    expect(s.q).toBeCloseTo(0.025, 15);
    expect(s.u).toBeCloseTo(0.05 * Math.sqrt(3) / 2, 15);
    expect(s.qErr).toBe(0);
    expect(s.uErr).toBe(0);
  });

  it('inverts propagateStokesErrors when σq = σu (the Jacobian is a rotation and scaling)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: -0.1, max: 0.1, noNaN: true }),
        fc.double({ min: -0.1, max: 0.1, noNaN: true }),
        fc.double({ min: 1e-5, max: 0.01, noNaN: true }),
        (q, u, s) => {
          // below p = σ/π the angle error is capped at 90°, so the Jacobian no longer inverts
          fc.pre(Math.hypot(q, u) > 1e-3 && Math.hypot(q, u) > s);
          const f = propagateStokesErrors(q, u, s, s);
          const back = stokesFromFractionAngle(f.p, f.pErr, f.thetaDeg, f.thetaErrDeg);
          expect(Math.abs(back.q - q)).toBeLessThan(1e-14);
          expect(Math.abs(back.u - u)).toBeLessThan(1e-14);
          expect(Math.abs(back.qErr / s - 1)).toBeLessThan(1e-9);
          expect(Math.abs(back.uErr / s - 1)).toBeLessThan(1e-9);
        },
      ),
    );
  });

  it('propagates σθ through 2p: θ error only, at θ = 0, goes entirely into u', () => {
    // θ = 0: ∂q/∂θ = 0, ∂u/∂θ = 2p (θ in rad).
    const s = stokesFromFractionAngle(0.04, 0, 0, 1);
    expect(s.qErr).toBeCloseTo(0, 15);
    expect(s.uErr).toBeCloseTo(2 * 0.04 * (Math.PI / 180), 15);
  });
});

describe('angleIsNonGaussian', () => {
  it('flags p/σ below 5 (Naghizadeh-Khouei & Clarke 1993)', () => {
    expect(angleIsNonGaussian(0.0049, 0.001)).toBe(true);
    expect(angleIsNonGaussian(0.005, 0.001)).toBe(false);
    expect(angleIsNonGaussian(0.02, 0.001)).toBe(false);
    expect(angleIsNonGaussian(0, 0.001)).toBe(true);
  });
});

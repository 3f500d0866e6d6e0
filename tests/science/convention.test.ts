import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { angleInConvention, jumpInConvention, uInConvention } from '../../server/science/convention.js';
import { polarizationAngleDeg } from '../../server/science/polarization.js';
import { angleDifferenceDeg } from '../../server/science/axial.js';

/** |a − b| for 180°-periodic angles. */
const axialGap = (a: number, b: number) => {
  const d = (((a - b) % 180) + 180) % 180;
  return Math.min(d, 180 - d);
};

describe('IAU → COSMO (U_COSMO = −U_IAU, METHODS.md)', () => {
  it('flips U and leaves the IAU values alone', () => {
    expect(uInConvention(0.012, 'cosmo')).toBe(-0.012);
    expect(uInConvention(0.012, 'iau')).toBe(0.012);
    expect(angleInConvention(30, 'iau')).toBe(30);
    expect(jumpInConvention(-40, 'iau')).toBe(-40);
  });

  it('reflects angles: θ → (180° − θ) mod 180, staying in [0, 180)', () => {
    expect(angleInConvention(30, 'cosmo')).toBe(150);
    expect(angleInConvention(0, 'cosmo')).toBe(0);
    expect(angleInConvention(90, 'cosmo')).toBe(90);
    expect(angleInConvention(179.5, 'cosmo')).toBeCloseTo(0.5, 12);
  });

  it('negates jumps, keeping them in (−90, 90]', () => {
    expect(jumpInConvention(60, 'cosmo')).toBe(-60);
    expect(jumpInConvention(-89, 'cosmo')).toBe(89);
    expect(jumpInConvention(90, 'cosmo')).toBe(90);
    expect(Object.is(jumpInConvention(0, 'cosmo'), -0)).toBe(false);
  });

  it('the reflected angle is the angle of (q, −u): derived from θ = ½·atan2(u, q)', () => {
    fc.assert(
      fc.property(fc.double({ min: -0.1, max: 0.1, noNaN: true }), fc.double({ min: -0.1, max: 0.1, noNaN: true }), (q, u) => {
        fc.pre(Math.hypot(q, u) > 1e-6);
        const cosmo = angleInConvention(polarizationAngleDeg(q, u), 'cosmo');
        expect(cosmo).toBeGreaterThanOrEqual(0);
        expect(cosmo).toBeLessThan(180);
        expect(axialGap(cosmo, polarizationAngleDeg(q, uInConvention(u, 'cosmo')))).toBeLessThan(1e-9);
      }),
    );
  });

  it('a jump between two layers in COSMO equals the jump of their COSMO angles', () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 179.999, noNaN: true }), fc.double({ min: 0, max: 179.999, noNaN: true }), (from, to) => {
        const iau = angleDifferenceDeg(to, from);
        const cosmo = angleDifferenceDeg(angleInConvention(to, 'cosmo'), angleInConvention(from, 'cosmo'));
        expect(axialGap(jumpInConvention(iau, 'cosmo'), cosmo)).toBeLessThan(1e-9);
        expect(jumpInConvention(iau, 'cosmo')).toBeGreaterThan(-90);
        expect(jumpInConvention(iau, 'cosmo')).toBeLessThanOrEqual(90);
      }),
    );
  });

  it('is its own inverse', () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 179.999, noNaN: true }), fc.double({ min: -89.999, max: 90, noNaN: true }), (theta, jump) => {
        expect(axialGap(angleInConvention(angleInConvention(theta, 'cosmo'), 'cosmo'), theta)).toBeLessThan(1e-9);
        expect(jumpInConvention(jumpInConvention(jump, 'cosmo'), 'cosmo')).toBeCloseTo(jump, 12);
      }),
    );
  });
});

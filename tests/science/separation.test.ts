import { describe, expect, it } from 'vitest';
import { angularSeparationDeg, positionAngleDeg } from '../../server/science/separation.js';
import separations from '../reference/fixtures/separations.json';

describe('angularSeparationDeg vs astropy', () => {
  // astropy 5.2 fixture: SkyCoord.separation (Vincenty form).
  const rows = separations.rows as [number, number, number, number, number, string][];

  it('agrees at arcsecond and sub-arcsecond scale to 1e-9 arcsec + 1e-8 relative', () => {
    const small = rows.filter((r) => r[5] === 'small');
    expect(small.length).toBeGreaterThan(50);
    expect(Math.min(...small.map((r) => r[4]))).toBeLessThan(0.01);
    for (const [ra1, dec1, ra2, dec2, sepArcsec] of small) {
      const got = angularSeparationDeg(ra1, dec1, ra2, dec2) * 3600;
      // Coordinates carry 17 significant digits (~1e-14°) in the fixture.
      expect(Math.abs(got - sepArcsec)).toBeLessThan(1e-9 + 1e-8 * sepArcsec);
    }
  });

  it('agrees at large separations, including near-antipodal pairs', () => {
    for (const [ra1, dec1, ra2, dec2, sepArcsec] of rows.filter((r) => r[5] === 'large')) {
      expect(Math.abs(angularSeparationDeg(ra1, dec1, ra2, dec2) * 3600 - sepArcsec)).toBeLessThan(1e-8);
    }
  });

  it('is exact on simple cases and symmetric', () => {
    expect(angularSeparationDeg(10, 0, 20, 0)).toBeCloseTo(10, 13);
    expect(angularSeparationDeg(0, 90, 123, 89)).toBeCloseTo(1, 13);
    expect(angularSeparationDeg(0, 0, 180, 0)).toBeCloseTo(180, 13);
    expect(angularSeparationDeg(359.9999, 0, 0.0001, 0) * 3600).toBeCloseTo(0.72, 9);
    expect(angularSeparationDeg(1, 2, 3, 4)).toBeCloseTo(angularSeparationDeg(3, 4, 1, 2), 14);
    // One milliarcsecond in declination: 1/3.6e6 degrees.
    expect(angularSeparationDeg(50, 30, 50, 30 + 1 / 3.6e6) * 3.6e6).toBeCloseTo(1, 7);
  });
});

describe('positionAngleDeg', () => {
  it('is 0 towards north, 90 towards east, in [0, 360)', () => {
    expect(positionAngleDeg(10, 0, 10, 1)).toBeCloseTo(0, 12);
    expect(positionAngleDeg(10, 0, 11, 0)).toBeCloseTo(90, 12);
    expect(positionAngleDeg(10, 0, 10, -1)).toBeCloseTo(180, 12);
    expect(positionAngleDeg(10, 0, 9, 0)).toBeCloseTo(270, 12);
  });
});

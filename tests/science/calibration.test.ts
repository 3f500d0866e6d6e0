import { describe, expect, it } from 'vitest';
import {
  angleZeroPoint,
  applyCalibration,
  bandNormalisation,
  calibratedAngleDeg,
  instrumentalPolarization,
  mjdRangeOfNight,
  nightOfMjd,
  standardNameKey,
} from '../../server/science/calibration.js';
import { galacticPolePositionAngleDeg, rotateStokesToGalactic } from '../../server/science/frames.js';
import { polarizationAngleDeg, propagateStokesErrors } from '../../server/science/polarization.js';
import { measurementPlausibilityFlags, repeatsAreInconsistent } from '../../server/science/plausibility.js';
import { mulberry32 } from '../../server/science/random.js';

const DEG = Math.PI / 180;

// Standards of Schmidt, Elston & Lupie 1992 (AJ 104, 1563) as listed in METHODS.md — values from memory.
const HD204827_V = { p: 0.0532, theta: 58.7 };
const BD59_389_V = { p: 0.067, theta: 98.1 };

/** An instrument that rotates angles by +zp and adds (qi, ui): what it records for a star of true (p, θ). */
function through(p: number, thetaDeg: number, zp: number, qi: number, ui: number) {
  return { q: p * Math.cos(2 * (thetaDeg + zp) * DEG) + qi, u: p * Math.sin(2 * (thetaDeg + zp) * DEG) + ui };
}

describe('standardNameKey: case and spacing ignored', () => {
  it('agrees on the spellings observers use', () => {
    expect(standardNameKey('HD 204827')).toBe(standardNameKey('HD204827'));
    expect(standardNameKey('hd  204827')).toBe('HD204827');
    expect(standardNameKey('BD+59 389')).toBe('BD+59389');
    expect(standardNameKey('BD+59 389')).not.toBe(standardNameKey('BD+59 38'));
  });
});

describe('instrumentalPolarization: weighted mean (q, u) of unpolarized standards', () => {
  it('equals the plain mean and χ² of scipy for equal errors', () => {
    // scipy 1.10.1: mean, χ² = Σ((q−q̄)² + (u−ū)²)/σ², chi2.sf(4.5185…, 4) = 0.3403573068152882
    const obs = [
      { q: 0.0021, u: -0.0012, qErr: 0.0003, uErr: 0.0003 },
      { q: 0.0017, u: -0.0008, qErr: 0.0003, uErr: 0.0003 },
      { q: 0.0025, u: -0.0011, qErr: 0.0003, uErr: 0.0003 },
    ];
    const r = instrumentalPolarization(obs);
    expect(r.q).toBeCloseTo(0.0021, 15);
    expect(r.u).toBeCloseTo(-0.0010333333333333334, 15);
    expect(r.qErr).toBeCloseTo(0.0003 / Math.sqrt(3), 15); // σ/√n (weighted mean, common practice)
    expect(r.chi2).toBeCloseTo(4.51851851851852, 10);
    expect(r.dof).toBe(4);
    expect(r.chi2Probability).toBeCloseTo(0.3403573068152882, 8);
  });

  it('weights by inverse variance and adds p_ref/√2 to each component', () => {
    const r = instrumentalPolarization([
      { q: 0.001, u: 0, qErr: 0.0001, uErr: 0.0001 },
      { q: 0.002, u: 0, qErr: 0.0002, uErr: 0.0002 },
    ]);
    expect(r.q).toBeCloseTo((0.001 / 1e-8 + 0.002 / 4e-8) / (1 / 1e-8 + 1 / 4e-8), 15);
    const withRef = instrumentalPolarization([{ q: 0.001, u: 0, qErr: 0.0003, uErr: 0.0003, refPFraction: 0.0004 }]);
    expect(withRef.qErr).toBeCloseTo(Math.sqrt(0.0003 ** 2 + 0.0004 ** 2 / 2), 15);
  });

  it('refuses no standards and zero errors', () => {
    expect(() => instrumentalPolarization([])).toThrow(RangeError);
    expect(() => instrumentalPolarization([{ q: 0, u: 0, qErr: 0, uErr: 0 }])).toThrow(/expected errors > 0/);
  });
});

describe('angleZeroPoint: axial weighted mean of θ_obs − θ_ref after the instrumental (q, u)', () => {
  it('recovers the terms built into a night of METHODS.md standards', () => {
    const zp = 4.25;
    const qi = 0.0015;
    const ui = -0.0009;
    const unpol = [0, 0].map(() => ({ ...through(0, 0, zp, qi, ui), qErr: 0.0002, uErr: 0.0002 }));
    const inst = instrumentalPolarization(unpol);
    expect(inst.q).toBeCloseTo(qi, 15);
    expect(inst.u).toBeCloseTo(ui, 15);
    const pol = [HD204827_V, BD59_389_V].map((s) => ({ ...through(s.p, s.theta, zp, qi, ui), qErr: 0.0002, uErr: 0.0002, thetaRefDeg: s.theta }));
    const r = angleZeroPoint(pol, inst);
    expect(r.zeroPointDeg).toBeCloseTo(zp, 10);
    for (const s of r.standards) expect(s.residualDeg).toBeCloseTo(0, 10);
    // without subtracting the instrumental term first the zero-point is biased
    expect(Math.abs(angleZeroPoint(pol).zeroPointDeg - zp)).toBeGreaterThan(0.1);
  });

  it('matches scipy circmean/circstd of doubled offsets, halved, across the ±90° wrap', () => {
    // offsets 88, −89, 87.5, 89.5 deg with equal weights: scipy.stats.circmean(2Δ)/2 = 88.99980946901505,
    // circstd(2Δ)/2 = 1.3694924238027282 (scipy 1.10.1, Debian /usr/bin/python3)
    const offsets = [88, -89, 87.5, 89.5];
    const pol = offsets.map((d) => ({ q: 0.05 * Math.cos(2 * (10 + d) * DEG), u: 0.05 * Math.sin(2 * (10 + d) * DEG), qErr: 0.0005, uErr: 0.0005, thetaRefDeg: 10 }));
    const r = angleZeroPoint(pol);
    expect(r.zeroPointDeg).toBeCloseTo(88.99980946901505, 8);
    expect(r.externalErrDeg!).toBeCloseTo(1.3694924238027282 / 2, 8); // circstd / √4
    // internal error: every σθ = 28.65°·σ/p (Serkowski 1962) → (Σw)^−½ = σθ/√n
    expect(r.internalErrDeg).toBeCloseTo((0.5 * (0.0005 / 0.05)) / DEG / 2, 8);
    expect(r.zeroPointErrDeg).toBe(Math.max(r.internalErrDeg, r.externalErrDeg!));
  });

  it('second scipy case, small offsets', () => {
    // circmean = 2.4213567113717986, circstd = 1.7949263708283607 (scipy 1.10.1)
    const offsets = [2.5, 3.1, -1.0, 4.2, 3.3];
    const r = angleZeroPoint(offsets.map((d) => ({ q: 0.03 * Math.cos(2 * (150 + d) * DEG), u: 0.03 * Math.sin(2 * (150 + d) * DEG), qErr: 0.0003, uErr: 0.0003, thetaRefDeg: 150 })));
    expect(r.zeroPointDeg).toBeCloseTo(2.4213567113717986, 8);
    expect(r.externalErrDeg!).toBeCloseTo(1.7949263708283607 / Math.sqrt(5), 8);
  });
});

describe('applyCalibration: subtract (q, u)_inst, rotate by −zero-point', () => {
  const terms = { instrumentalQ: 0.0012, instrumentalU: -0.0007, instrumentalQErr: 0.0001, instrumentalUErr: 0.0001, zeroPointDeg: 3.5, zeroPointErrDeg: 0.4 };

  it('moves a science star’s angle by −zero-point and keeps p, on random stars', () => {
    const rnd = mulberry32(12);
    for (let i = 0; i < 500; i++) {
      const p = 0.001 + 0.08 * rnd();
      const theta = 180 * rnd();
      const zp = -89 + 178 * rnd();
      const s = { ...through(p, theta, zp, terms.instrumentalQ, terms.instrumentalU), qErr: 0.001, uErr: 0.001 };
      const c = applyCalibration(s, { ...terms, zeroPointDeg: zp });
      const d = ((polarizationAngleDeg(c.q, c.u) - theta + 270) % 180) - 90;
      expect(Math.abs(d)).toBeLessThan(1e-9);
      expect(Math.hypot(c.q, c.u)).toBeCloseTo(p, 12);
      expect(calibratedAngleDeg(s, { ...terms, zeroPointDeg: zp })).toBeCloseTo(polarizationAngleDeg(c.q, c.u), 9);
    }
  });

  it('uses the same rotation form (and sign) as the frame change in METHODS.md', () => {
    // rotateStokesToGalactic is checked against astropy in frames.test.ts; with ψ as zero-point the two agree
    const ra = 83.8, dec = -5.4;
    const psi = galacticPolePositionAngleDeg(ra, dec);
    const g = rotateStokesToGalactic(0.01, -0.02, 0.001, 0.002, ra, dec);
    const c = applyCalibration({ q: 0.01, u: -0.02, qErr: 0.001, uErr: 0.002 }, { instrumentalQ: 0, instrumentalU: 0, instrumentalQErr: 0, instrumentalUErr: 0, zeroPointDeg: psi, zeroPointErrDeg: 0 });
    expect(c.q).toBeCloseTo(g.q, 15);
    expect(c.u).toBeCloseTo(g.u, 15);
    expect(c.qErr).toBeCloseTo(g.qErr, 15);
    expect(c.uErr).toBeCloseTo(g.uErr, 15);
  });

  it('propagates errors as the linear (Jacobian) form, checked by Monte Carlo', () => {
    // draw q, u, the instrumental terms and ψ from their Gaussians; the spread of (q', u') must match σq', σu'
    const s = { q: 0.02, u: 0.01, qErr: 0.0008, uErr: 0.0005 };
    const c = applyCalibration(s, terms);
    const rnd = mulberry32(7);
    const gauss = () => Math.sqrt(-2 * Math.log(1 - rnd())) * Math.cos(2 * Math.PI * rnd());
    const n = 40000;
    let sq = 0, su = 0;
    for (let i = 0; i < n; i++) {
      const x = applyCalibration(
        { q: s.q + s.qErr * gauss(), u: s.u + s.uErr * gauss(), qErr: 0, uErr: 0 },
        { instrumentalQ: terms.instrumentalQ + terms.instrumentalQErr * gauss(), instrumentalU: terms.instrumentalU + terms.instrumentalUErr * gauss(), instrumentalQErr: 0, instrumentalUErr: 0, zeroPointDeg: terms.zeroPointDeg + terms.zeroPointErrDeg * gauss(), zeroPointErrDeg: 0 },
      );
      sq += (x.q - c.q) ** 2;
      su += (x.u - c.u) ** 2;
    }
    // a sample s.d. from 40 000 draws is within ~1 % (3σ ≈ 3/√(2n)); allow 2 %
    expect(Math.sqrt(sq / n) / c.qErr).toBeGreaterThan(0.98);
    expect(Math.sqrt(sq / n) / c.qErr).toBeLessThan(1.02);
    expect(Math.sqrt(su / n) / c.uErr).toBeGreaterThan(0.98);
    expect(Math.sqrt(su / n) / c.uErr).toBeLessThan(1.02);
  });

  it('changes nothing with zero terms', () => {
    const s = { q: 0.013, u: -0.004, qErr: 0.0007, uErr: 0.0009 };
    expect(applyCalibration(s, { instrumentalQ: 0, instrumentalU: 0, instrumentalQErr: 0, instrumentalUErr: 0, zeroPointDeg: 0, zeroPointErrDeg: 0 })).toEqual(s);
    // and σθ of the result follows Serkowski 1962 for equal errors
    const eq = applyCalibration({ q: 0.02, u: 0, qErr: 0.001, uErr: 0.001 }, { ...terms, instrumentalQErr: 0, instrumentalUErr: 0, zeroPointErrDeg: 0 });
    expect(propagateStokesErrors(eq.q, eq.u, eq.qErr, eq.uErr).thetaErrDeg).toBeCloseTo(28.6479 * (0.001 / Math.hypot(eq.q, eq.u)), 3);
  });
});

describe('nightOfMjd: UTC noon to noon', () => {
  it('names the evening the night began on (dates from astropy Time)', () => {
    // astropy: MJD 61020.2 = 2025-12-11 04:48 UTC → night of 2025-12-10; 61020.6 = 2025-12-11 14:24 → night of 2025-12-11
    expect(nightOfMjd(61020.2)).toBe('2025-12-10');
    expect(nightOfMjd(61020.49)).toBe('2025-12-10');
    expect(nightOfMjd(61020.6)).toBe('2025-12-11');
    expect(nightOfMjd(60310.0)).toBe('2023-12-31'); // astropy: MJD 60310 = 2024-01-01 00:00
    expect(nightOfMjd(null)).toBeNull();
    expect(mjdRangeOfNight('2025-12-10')).toEqual([61019.5, 61020.5]);
  });
});

describe('bandNormalisation: Serkowski law with K(λmax) of Whittet et al. 1992', () => {
  it('matches the formula with the METHODS.md defaults', () => {
    // K = 0.01 + 1.66·0.55 = 0.923; V→R: exp(−K ln²(0.55/0.64)) / 1 = 0.9790242329427671 (numpy)
    const n = bandNormalisation('V', 'R');
    expect(n.k).toBeCloseTo(0.923, 12);
    expect(n.lambdaMaxUm).toBe(0.55);
    expect(n.factor).toBeCloseTo(0.9790242329427671, 12);
    // B→R: p_R/p_B = 1 / (S(B)/S(R)), S(B)/S(R) = 0.975543920787927 (numpy)
    expect(bandNormalisation('B', 'R').factor).toBeCloseTo(1 / 0.975543920787927, 12);
    expect(bandNormalisation('R', 'R').factor).toBe(1);
    expect(bandNormalisation('R', 'V').factor * n.factor).toBeCloseTo(1, 14);
    expect(() => bandNormalisation('K', 'R')).toThrow(/expected one of U, B, V, R, I/);
  });
});

describe('plausibility flags', () => {
  it('p/E(B−V) above 9 %/mag (Serkowski et al. 1975), the p ceiling, p/σp < 5 (Naghizadeh-Khouei & Clarke 1993)', () => {
    expect(measurementPlausibilityFlags({ p: 0.091, pErr: 0.001, ebv: 1 })).toEqual(['above_efficiency_envelope']);
    expect(measurementPlausibilityFlags({ p: 0.089, pErr: 0.001, ebv: 1 })).toEqual([]);
    expect(measurementPlausibilityFlags({ p: 0.2, pErr: 0.001, ebv: null })).toEqual(['above_p_ceiling']);
    expect(measurementPlausibilityFlags({ p: 0.05, pErr: 0.001, ebv: null }, { pCeiling: 0.04 })).toEqual(['above_p_ceiling']);
    expect(measurementPlausibilityFlags({ p: 0.0049, pErr: 0.001, ebv: null })).toEqual(['low_p_snr']);
    expect(measurementPlausibilityFlags({ p: 0.0051, pErr: 0.001, ebv: null })).toEqual([]);
  });

  it('repeats: χ² tail below 0.001 (scipy chi2.sf(18, 2) = 1.234e-4)', () => {
    expect(repeatsAreInconsistent([{ q: 0.01, u: 0, qErr: 0.0005, uErr: 0.0005 }, { q: 0.013, u: 0, qErr: 0.0005, uErr: 0.0005 }])).toBe(true);
    expect(repeatsAreInconsistent([{ q: 0.01, u: 0, qErr: 0.0005, uErr: 0.0005 }, { q: 0.011, u: 0, qErr: 0.0005, uErr: 0.0005 }])).toBe(false);
    expect(repeatsAreInconsistent([{ q: 0.01, u: 0, qErr: 0.0005, uErr: 0.0005 }])).toBe(false);
  });
});

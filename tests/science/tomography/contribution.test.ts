import { describe, expect, it } from 'vitest';
import { layerContribution } from '../../../server/science/tomography/contribution';

describe('layerContribution (thin screens: ΔS_k = S̄_k − S̄_{k−1})', () => {
  it('the first layer is its segment mean; σθ = 28.65°·σ/p for equal errors (Serkowski 1962)', () => {
    const c = layerContribution({ meanQ: 0.03, meanU: 0.04, meanQErr: 0.001, meanUErr: 0.001 }, undefined);
    expect(c.deltaQ).toBe(0.03);
    expect(c.p).toBeCloseTo(0.05, 15);
    expect(c.thetaErrDeg).toBeCloseTo((28.64788975654116 * 0.001) / 0.05, 12); // 90/π
    expect(c.pDebiased).toBeLessThan(c.p);
    expect(c.angleNonGaussian).toBe(false);
  });

  it('a later layer carries the step from the one before, errors in quadrature', () => {
    const prev = { meanQ: 0.01, meanU: 0, meanQErr: 0.003, meanUErr: 0.003 };
    const c = layerContribution({ meanQ: 0.01, meanU: 0.02, meanQErr: 0.004, meanUErr: 0.004 }, prev);
    expect(c.deltaQ).toBe(0);
    expect(c.deltaU).toBe(0.02);
    expect(c.deltaQErr).toBeCloseTo(0.005, 15); // 3-4-5
    expect(c.thetaDeg).toBeCloseTo(45, 12); // u only, q = 0: θ = ½·atan2(u, 0)
    expect(c.angleNonGaussian).toBe(true); // p/σ = 4 < 5 (Naghizadeh-Khouei & Clarke 1993)
  });
});

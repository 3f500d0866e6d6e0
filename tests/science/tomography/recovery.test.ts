import { describe, expect, it } from 'vitest';
import { fitSightline } from '../../../server/science/tomography/fit';
import { oneCloudField, twoCloudField, threeCloudField } from './fields';

/**
 * Seeded synthetic recovery. Rates are printed and asserted with margins: each trial count is
 * chosen so the binomial standard error (sqrt(p(1−p)/N)) is small next to the margin between
 * the measured rate and the threshold. Fields are fixed by their seeds, so a rate moves only
 * when the method changes.
 */
const DRAWS = 100;

describe('synthetic recovery', () => {
  it('one-cloud fields give one layer and no significant jump (≥ 90 %)', () => {
    // N = 200: binomial σ ≈ 1.5 % near 94 %.
    const N = 200;
    let ok = 0;
    for (let i = 0; i < N; i++) {
      const f = oneCloudField(i);
      const r = fitSightline(f.stars, { draws: DRAWS, cellId: `one-${i}` });
      if (r.nLayers === 1 && r.jumps.length === 0 && !r.complex) {
        ok++;
        // the layer carries the cloud: p ≈ 1.5 % and θ within 3σ of the truth
        expect(Math.abs(r.layers[0].pDebiased - 0.015)).toBeLessThan(5 * r.layers[0].pErr + 0.001);
      }
    }
    console.log(`one-cloud: 1 layer, no jump in ${ok}/${N} fields`);
    expect(ok / N).toBeGreaterThanOrEqual(0.9);
  });

  it('two clouds 60° apart give two layers and a jump within 3σ of 60° (≥ 85 %)', () => {
    // 60° between the two clouds' fields: the common test case of the trade (common practice).
    const N = 200;
    let layers2 = 0, ok = 0, complex = 0;
    for (let i = 0; i < N; i++) {
      const f = twoCloudField(i);
      const r = fitSightline(f.stars, { draws: DRAWS, cellId: `two-${i}`, jumpThresholdDeg: 30 });
      if (r.nLayers !== 2) continue;
      layers2++;
      const j = r.jumps[0];
      if (Math.abs(j.deltaThetaDeg - 60) <= 3 * j.sigmaDeg) ok++;
      if (r.complex) complex++;
    }
    console.log(`two-cloud: 2 layers in ${layers2}/${N} fields, jump within 3σ of 60° in ${ok}/${N}, complex in ${complex}/${N}`);
    expect(ok / N).toBeGreaterThanOrEqual(0.85);
    expect(complex).toBe(layers2); // both layers strong, |Δθ| ≈ 60° > 30°
  });

  it('three-cloud fields give three layers (rate reported, ≥ 75 %)', () => {
    const N = 100;
    let ok = 0;
    for (let i = 0; i < N; i++) {
      const f = threeCloudField(i);
      const r = fitSightline(f.stars, { draws: DRAWS, cellId: `three-${i}` });
      if (r.nLayers === 3) ok++;
    }
    console.log(`three-cloud: 3 layers in ${ok}/${N} fields`);
    expect(ok / N).toBeGreaterThanOrEqual(0.75);
  });

  it('16–84 % distance ranges cover the true cloud distance about 68 % of the time', () => {
    // N = 200 trials: binomial σ at 68 % is 3.3 %, so the 50–85 % band is ±5σ around 68 %.
    const N = 200;
    let n = 0, covered = 0, coveredMid = 0, widthSum = 0, widthMid = 0;
    for (let i = 0; i < N; i++) {
      const f = oneCloudField(1000 + i);
      const truth = f.clouds[0].distancePc;
      const r = fitSightline(f.stars, { draws: DRAWS, cellId: `cov-${i}` });
      const m = fitSightline(f.stars, { draws: DRAWS, cellId: `cov-${i}`, breakPosition: 'midpoint' });
      if (r.nLayers !== 1 || r.layers[0].kind !== 'break' || m.nLayers !== 1) continue;
      n++;
      const L = r.layers[0], M = m.layers[0];
      if (truth >= L.distanceLoPc && truth <= L.distanceHiPc) covered++;
      if (truth >= M.distanceLoPc && truth <= M.distanceHiPc) coveredMid++;
      widthSum += L.distanceHiPc - L.distanceLoPc;
      widthMid += M.distanceHiPc - M.distanceLoPc;
    }
    const cov = covered / n, covMid = coveredMid / n;
    console.log(
      `coverage: true distance inside 16–84 % in ${covered}/${n} (${(100 * cov).toFixed(1)} %, mean width ${(widthSum / n).toFixed(1)} pc); ` +
      `midpoint rule ${coveredMid}/${n} (${(100 * covMid).toFixed(1)} %, width ${(widthMid / n).toFixed(1)} pc)`,
    );
    expect(n).toBeGreaterThan(180);
    expect(cov).toBeGreaterThanOrEqual(0.5);
    expect(cov).toBeLessThanOrEqual(0.85);
    // The midpoint rule ignores where in the gap the edge lies: narrower and under-covering.
    expect(covMid).toBeLessThan(cov);
  });
});

import { describe, expect, it } from 'vitest';
import { blendChi2, chi2ForTail } from '../../../server/science/tomography/blend';
import { fitSightline } from '../../../server/science/tomography/fit';
import { synthesizeField } from '../../../server/science/tomography/synthesize';
import { mulberry32, hashSeed } from '../../../server/science/random';

describe('blend merging', () => {
  it('χ²_1 critical value at 5 % is 3.841 (standard tables, from memory)', () => {
    expect(chi2ForTail(0.05)).toBeCloseTo(3.841, 3);
  });

  it('a mean between its neighbours is a blend; one off the line is not', () => {
    const a = { meanQ: 0, meanU: 0, varQ: 1e-8, varU: 1e-8 };
    const b = { meanQ: 0.02, meanU: 0.01, varQ: 1e-8, varU: 1e-8 };
    const between = blendChi2({ meanQ: 0.006, meanU: 0.003, varQ: 4e-8, varU: 4e-8 }, a, b);
    expect(between.chi2).toBeLessThan(1e-6);
    expect(between.alpha).toBeCloseTo(0.7, 4); // 0.006 = 0.7·0 + 0.3·0.02
    const off = blendChi2({ meanQ: 0.006, meanU: 0.012, varQ: 4e-8, varU: 4e-8 }, a, b);
    expect(off.chi2).toBeGreaterThan(100);
  });

  it('a sharp single cloud with 5 % parallax errors gives one layer, not two', () => {
    // 80 stars to 1000 pc (≈ 8 pc apart) with 5 % errors (≈ 25 pc at 500 pc): many stars
    // swap sides of the edge, the situation that makes a fit split one edge into two breaks.
    const N = 60;
    let one = 0, oneNoMerge = 0, merged = 0, oneSurvey = 0;
    for (let i = 0; i < N; i++) {
      const r = mulberry32(hashSeed('blend-field', i));
      const f = synthesizeField({
        clouds: [{ distancePc: 350 + 300 * r(), p: 0.02, thetaDeg: 180 * r() }],
        nStars: 80, maxDistancePc: 1000, parallaxFracErr: 0.05, stokesErr: [0.001, 0.002], seed: `blend-${i}`,
      });
      // The classic fit shows what blend merging does on its own (the survey fit also tests each
      // step, which removes most blends even without merging).
      const withMerge = fitSightline(f.stars, { draws: 20, cellId: `blend-${i}`, method: 'classic' });
      const without = fitSightline(f.stars, { draws: 20, cellId: `blend-${i}`, blendSpanSigma: 0, method: 'classic' });
      if (fitSightline(f.stars, { draws: 20, cellId: `blend-${i}` }).nLayers === 1) oneSurvey++;
      if (withMerge.nLayers === 1) one++;
      if (without.nLayers === 1) oneNoMerge++;
      if (withMerge.blendsMerged > 0) merged++;
    }
    console.log(`blend: sharp cloud, 5 % parallax errors: 1 layer in ${one}/${N} with merging, ${oneNoMerge}/${N} without; merges in ${merged} nominal fits`);
    expect(one / N).toBeGreaterThanOrEqual(0.9);
    expect(merged).toBeGreaterThan(0);
    expect(oneNoMerge).toBeLessThan(one);
    expect(oneSurvey / N).toBeGreaterThanOrEqual(0.9);
  });
});

import { describe, expect, it } from 'vitest';
import { fitSightline } from '../../../server/science/tomography/fit';
import { twoCloudField } from './fields';

describe('reproducibility', () => {
  const f = twoCloudField(7);

  it('same input and cell id give identical output', () => {
    const a = fitSightline(f.stars, { draws: 50, cellId: 'cell-7' });
    const b = fitSightline(f.stars.map((s) => ({ ...s })), { draws: 50, cellId: 'cell-7' });
    expect(JSON.stringify(a)).toBe(JSON.stringify(b));
  });

  it('the input order of the stars does not matter', () => {
    const a = fitSightline(f.stars, { draws: 50, cellId: 'cell-7' });
    const reversed = fitSightline(f.stars.slice().reverse(), { draws: 50, cellId: 'cell-7' });
    expect(JSON.stringify(reversed)).toBe(JSON.stringify(a));
  });

  it('another cell id gives other draws (the seed is used)', () => {
    const a = fitSightline(f.stars, { draws: 50, cellId: 'cell-7' });
    const c = fitSightline(f.stars, { draws: 50, cellId: 'cell-8' });
    expect(c.layers.map((l) => l.distanceLoPc)).not.toEqual(a.layers.map((l) => l.distanceLoPc));
    // nominal structure does not depend on the draws
    expect(c.breaksFromNominal).toEqual(a.breaksFromNominal);
  });

  it('seed is an alternative to cellId', () => {
    expect(JSON.stringify(fitSightline(f.stars, { draws: 20, seed: 42 }))).toBe(
      JSON.stringify(fitSightline(f.stars, { draws: 20, cellId: '42' })),
    );
  });

  it('rejects bad input with a message naming the star, field and expectation', () => {
    const bad = f.stars.slice();
    bad[3] = { ...bad[3], qErr: 0 };
    expect(() => fitSightline(bad, { draws: 0 })).toThrow(/star "s\d+": qErr = 0; expected a finite number > 0/);
    const dup = [f.stars[0], { ...f.stars[1], id: f.stars[0].id }];
    expect(() => fitSightline(dup, { draws: 0 })).toThrow(/ids unique/);
  });
});

import { describe, expect, it } from 'vitest';
import { coverOrder, discRangesNest } from '../../server/science/discRanges.js';
import { npixForNside, pix2angNest, queryDiscNest } from '../../server/science/healpix.js';
import { angularSeparationDeg } from '../../server/science/separation.js';

const inRanges = (ranges: [number, number][], p: number) => ranges.some(([lo, hi]) => p >= lo && p <= hi);

describe('coverOrder', () => {
  it('picks pixels about a quarter of the radius across, within 2…maxOrder', () => {
    // pixel size ≈ 58.6°/2^order (√(4π/12 sr), common practice)
    expect(coverOrder(10)).toBe(3); // 58.6/8 = 7.3° ≥ 5°, 58.6/16 = 3.7° < 5°
    expect(coverOrder(90)).toBe(2);
    expect(coverOrder(1e-9)).toBe(15);
    expect(coverOrder(1e-9, 8)).toBe(8);
  });
});

describe('discRangesNest', () => {
  it('ranges are sorted, disjoint and not adjacent', () => {
    const r = discRangesNest(10, 93.1, -12.4, 2.5);
    for (let i = 1; i < r.length; i++) expect(r[i][0]).toBeGreaterThan(r[i - 1][1] + 1);
  });

  // reference: testing every pixel centre at the fine order (brute force, independent of the descent)
  for (const [lon, lat, radius] of [[0, 89.5, 3], [180, -45, 5], [270, 0, 0.7], [45.3, 30.1, 12]] as const) {
    it(`cover every fine pixel whose centre is in the disc (${lon}°, ${lat}°, r ${radius}°)`, () => {
      const fineOrder = 6;
      const nside = 2 ** fineOrder;
      const ranges = discRangesNest(fineOrder, lon, lat, radius);
      for (let p = 0; p < npixForNside(nside); p++) {
        const c = pix2angNest(nside, p);
        if (angularSeparationDeg(lon, lat, c.lonDeg, c.latDeg) <= radius) expect(inRanges(ranges, p), `pixel ${p}`).toBe(true);
      }
      // and every pixel of the inclusive query at that order
      for (const p of queryDiscNest(nside, lon, lat, radius, true)) expect(inRanges(ranges, p)).toBe(true);
    });
  }
});

import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { StarGrid } from '../../server/intake/star-grid.js';
import { angularSeparationDeg } from '../../server/science/separation.js';
import { mulberry32 } from '../../server/science/random.js';

// The grid must find exactly the stars a brute-force search finds (every pair within the
// tolerance by the Vincenty separation, science/separation.ts), including at the poles, across
// RA 0/360 and on cell edges. Reference: the brute-force search itself (common practice).
const star = (id: number, ra: number, dec: number) => ({ id, name: null, source_id: null, ra_deg: ra, dec_deg: dec, parallax_mas: null, parallax_err_mas: null, hpx15: 0, batch_id: null });

function bruteForce(stars: { ra: number; dec: number }[], ra: number, dec: number, tolArcsec: number): number[] {
  return stars.flatMap((s, k) => (angularSeparationDeg(ra, dec, s.ra, s.dec) * 3600 <= tolArcsec ? [k] : [])).sort((a, b) => a - b);
}

describe('StarGrid (fixed-radius neighbours on the sphere)', () => {
  it('agrees with a brute-force search near the poles, across RA 0/360 and in clusters', () => {
    const rnd = mulberry32(11);
    for (const tol of [0.5, 1, 3, 30]) {
      const g = new StarGrid(tol);
      const stars: { ra: number; dec: number }[] = [];
      // clusters around awkward places: both poles, RA 0/360, the equator, random spots
      const centres = [[0, 90], [123, 89.9999], [0, -90], [359.9999, 0], [0.0001, 0.0002], [180, -45], [77.7, 12.3]];
      for (const [cra, cdec] of centres)
        for (let i = 0; i < 150; i++) {
          const dra = (rnd() - 0.5) * 4 * (tol / 3600) / Math.max(Math.cos((cdec * Math.PI) / 180), 1e-4);
          const ra = (((cra + dra) % 360) + 360) % 360;
          const dec = Math.max(-90, Math.min(90, cdec + (rnd() - 0.5) * 4 * (tol / 3600)));
          g.add(star(stars.length, ra, dec));
          stars.push({ ra, dec });
        }
      for (let t = 0; t < 400; t++) {
        const s = stars[Math.floor(rnd() * stars.length)];
        const ra = (((s.ra + (rnd() - 0.5) * (tol / 3600)) % 360) + 360) % 360;
        const dec = Math.max(-90, Math.min(90, s.dec + (rnd() - 0.5) * (tol / 3600)));
        const got = g.near(ra, dec).map((x) => x.k).sort((a, b) => a - b);
        expect(got).toEqual(bruteForce(stars, ra, dec, tol));
      }
    }
  });

  it('agrees with a brute-force search over 30,000 stars spread on the sky (its cube table grows many times)', () => {
    const rnd = mulberry32(5);
    const tol = 600; // 10′: several stars within the tolerance of many points
    const g = new StarGrid(tol);
    const stars: { ra: number; dec: number }[] = [];
    for (let i = 0; i < 30_000; i++) {
      const ra = rnd() * 360;
      const dec = (Math.asin(2 * rnd() - 1) * 180) / Math.PI;
      g.add(star(i, ra, dec));
      stars.push({ ra, dec });
    }
    for (let t = 0; t < 300; t++) {
      const s = stars[Math.floor(rnd() * stars.length)];
      const ra = (((s.ra + (rnd() - 0.5) * 0.2) % 360) + 360) % 360;
      const dec = Math.max(-90, Math.min(90, s.dec + (rnd() - 0.5) * 0.2));
      expect(g.near(ra, dec).map((x) => x.k).sort((a, b) => a - b)).toEqual(bruteForce(stars, ra, dec, tol));
    }
  });

  it('returns candidates nearest first with their separations', () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 359.999, noNaN: true }), fc.double({ min: -89.99, max: 89.99, noNaN: true }), (ra, dec) => {
        const g = new StarGrid(2);
        g.add(star(1, ra, dec + 1.5 / 3600));
        g.add(star(2, ra, dec + 0.5 / 3600));
        g.add(star(3, ra, dec + 5 / 3600));
        const got = g.near(ra, dec);
        expect(got.map((x) => x.k)).toEqual([1, 0]);
        expect(got[0].sepArcsec).toBeCloseTo(0.5, 6);
        expect(got[1].sepArcsec).toBeCloseTo(1.5, 6);
      }),
    );
  });

  it('keeps ids, source ids and nullable values', () => {
    const g = new StarGrid(1);
    const k = g.add({ id: 42, name: 'KS 1', source_id: '123', ra_deg: 10, dec_deg: 20, parallax_mas: null, parallax_err_mas: 0.1, hpx15: 7, batch_id: 3 });
    expect(g.size).toBe(1);
    expect(g.star(k)).toEqual({ id: 42, name: 'KS 1', source_id: '123', ra_deg: 10, dec_deg: 20, parallax_mas: null, parallax_err_mas: 0.1, hpx15: 7, batch_id: 3 });
    expect(g.slotOfSource('123')).toBe(k);
  });

  it('keeps every star exactly across its storage pages (65,536 stars a page)', () => {
    // 140,000 stars fill two pages and part of a third; every star reads back as added, and
    // stars on both sides of a page boundary are found by position
    const rnd = mulberry32(9);
    const g = new StarGrid(1);
    const n = 140_000;
    const stars: { ra: number; dec: number }[] = [];
    for (let i = 0; i < n; i++) {
      const ra = rnd() * 360;
      const dec = (Math.asin(2 * rnd() - 1) * 180) / Math.PI;
      const k = g.add({ id: 1_000_000 + i, name: i % 3 ? `KS ${i}` : undefined, source_id: null, ra_deg: ra, dec_deg: dec, parallax_mas: i % 2 ? 1 + i / n : null, parallax_err_mas: 0.1, hpx15: 2 ** 33 + i, batch_id: i % 5 ? i % 7 + 1 : null });
      expect(k).toBe(i);
      stars.push({ ra, dec });
    }
    expect(g.size).toBe(n);
    for (const i of [0, 65_535, 65_536, 65_537, 131_071, 131_072, n - 1]) {
      expect(g.star(i)).toEqual({ id: 1_000_000 + i, name: i % 3 ? `KS ${i}` : undefined, source_id: null, ra_deg: stars[i].ra, dec_deg: stars[i].dec, parallax_mas: i % 2 ? 1 + i / n : null, parallax_err_mas: 0.1, hpx15: 2 ** 33 + i, batch_id: i % 5 ? i % 7 + 1 : null });
      expect(g.batchOf(i)).toBe(i % 5 ? i % 7 + 1 : null);
      expect(g.near(stars[i].ra, stars[i].dec).map((x) => x.k)).toEqual(bruteForce(stars, stars[i].ra, stars[i].dec, 1));
    }
  });

  it('refuses a batch id that is not a positive 32-bit integer', () => {
    const g = new StarGrid(1);
    expect(() => g.add({ ...star(1, 10, 10), batch_id: 2 ** 31 })).toThrow(/batch id/);
    expect(() => g.add({ ...star(2, 10, 10), batch_id: 0 })).toThrow(/batch id/);
    expect(g.size).toBe(0);
  });
});

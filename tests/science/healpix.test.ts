import { describe, expect, it } from 'vitest';
import {
  ang2pixNest,
  loc2pixNest,
  maxPixelRadiusDeg,
  nestToRing,
  npixForNside,
  nsideForOrder,
  orderForNside,
  pix2angNest,
  pixelCornersNest,
  queryDiscNest,
  ringToNest,
} from '../../server/science/healpix.js';
import { angularSeparationDeg } from '../../server/science/separation.js';
import healpix from '../reference/fixtures/healpix.json';
import edges from '../reference/fixtures/healpix_edges.json';

describe('orders and NSIDE', () => {
  it('maps order ↔ NSIDE = 2^order for orders 0..15', () => {
    for (let o = 0; o <= 15; o++) {
      expect(nsideForOrder(o)).toBe(2 ** o);
      expect(orderForNside(2 ** o)).toBe(o);
    }
    expect(npixForNside(32768)).toBe(12 * 4 ** 15);
  });

  it('refuses orders above 15 with a clear error (the package overflows from order 16)', () => {
    expect(() => nsideForOrder(16)).toThrow(/HEALPix order 16: expected an integer from 0 to 15/);
    expect(() => orderForNside(65536)).toThrow(/power of two from 1 to 32768/);
    expect(() => ang2pixNest(65536, 10, 10)).toThrow(/NSIDE 65536/);
    expect(() => orderForNside(100)).toThrow(/power of two/);
    expect(() => nsideForOrder(2.5)).toThrow(/integer/);
  });

  it('keeps order-15 pixel numbers exact integers (12·4^15 < 2^53)', () => {
    const nside = 32768;
    // A pixel of base pixel 11 (numbers from 11·4^15 ≈ 1.18e10, far above 2^32).
    const top = ang2pixNest(nside, 315, -41.9);
    expect(top).toBe(12079594511); // healpy 1.16: ang2pix(32768, 315, -41.9, nest=True, lonlat=True)
    expect(Number.isSafeInteger(top)).toBe(true);
    expect(top).toBeGreaterThan(2 ** 32);
    expect(top).toBeLessThan(12 * nside * nside);
    const c = pix2angNest(nside, top);
    expect(ang2pixNest(nside, c.lonDeg, c.latDeg)).toBe(top);
  });
});

describe('ang2pixNest and pix2angNest vs healpy', () => {
  // healpy 1.16 fixture: ang2pix(nest=True, lonlat=True), positions away from pixel boundaries.
  const { orders, centreOrders, positions } = healpix;

  it('returns the same nested pixel at every order 4..15 for 500 positions', () => {
    expect(positions.length).toBe(500);
    for (const pos of positions) {
      orders.forEach((order, k) => {
        expect(ang2pixNest(2 ** order, pos.lonDeg, pos.latDeg)).toBe(pos.pix[k]);
      });
    }
  });

  it('returns the same pixel centres to 1e-9°', () => {
    for (const pos of positions) {
      centreOrders.forEach((order, k) => {
        const c = pix2angNest(2 ** order, pos.pix[orders.indexOf(order)]);
        const [lon, lat] = pos.centres[k];
        expect(angularSeparationDeg(c.lonDeg, c.latDeg, lon, lat)).toBeLessThan(1e-9);
      });
    }
  });

  it('round-trips a pixel centre back to its pixel', () => {
    for (const nside of [1, 16, 1024, 32768]) {
      for (const ipix of [0, 5, 12 * nside * nside - 1, Math.floor(7.3 * nside * nside)]) {
        const c = pix2angNest(nside, ipix);
        expect(ang2pixNest(nside, c.lonDeg, c.latDeg)).toBe(ipix);
      }
    }
  });

  it('wraps longitude and rejects bad latitude', () => {
    expect(ang2pixNest(64, -10, 20)).toBe(ang2pixNest(64, 350, 20));
    expect(ang2pixNest(64, 370, 20)).toBe(ang2pixNest(64, 10, 20));
    expect(() => ang2pixNest(64, 10, 91)).toThrow(/latitude 91/);
    expect(() => pix2angNest(64, 12 * 64 * 64)).toThrow(/expected an integer from 0 to 49151/);
  });
});

describe('queryDiscNest vs healpy at NSIDE 64', () => {
  // healpy 1.16 fixture. The package's inclusive query is approximate and healpy's inclusive
  // query is conservative in a different way ("all pixels that overlap, and maybe a few more"),
  // so the two sets may differ at the edge. Accepted, because a cone search must only never
  // lose a pixel that overlaps the disc: the package's set must contain every pixel that truly
  // overlaps the disc (from healpy's sampled pixel boundaries) and lie inside healpy's inclusive
  // set for the disc enlarged by 1.01 × the max pixel radius.
  const nside = healpix.discNside;

  it('non-inclusive (centre inside) matches healpy exactly', () => {
    for (const d of healpix.discs) {
      expect(queryDiscNest(nside, d.lonDeg, d.latDeg, d.radiusDeg, false)).toEqual(d.centresInside);
    }
  });

  it('inclusive contains every overlapping pixel and stays inside the enlarged healpy disc', () => {
    for (const d of healpix.discs) {
      const got = new Set(queryDiscNest(nside, d.lonDeg, d.latDeg, d.radiusDeg));
      for (const p of d.overlapping) expect(got.has(p)).toBe(true);
      const enlarged = new Set(d.inclusiveEnlarged);
      for (const p of got) expect(enlarged.has(p)).toBe(true);
      // The edge margin is modest: at most about one ring of pixels more than the overlap.
      expect(got.size).toBeLessThan(d.overlapping.length + 8 * Math.sqrt(d.overlapping.length) + 8);
    }
  });

  it('returns sorted, unique pixels and refuses radii of 90° or more', () => {
    const got = queryDiscNest(nside, 123.4, 41.8, 5);
    expect([...got].sort((a, b) => a - b)).toEqual(got);
    expect(new Set(got).size).toBe(got.length);
    expect(() => queryDiscNest(nside, 0, 0, 90)).toThrow(/below 90/);
  });

  it('reports the max pixel radius like healpy', () => {
    expect(maxPixelRadiusDeg(nside)).toBeCloseTo(healpix.maxPixradDeg, 10);
  });
});

describe('pixelCornersNest and NESTED ↔ RING vs healpy', () => {
  it('gives the four corners (N, W, S, E) of healpy.boundaries(step=1)', () => {
    for (const c of healpix.corners) {
      const got = pixelCornersNest(c.nside, c.pix);
      expect(got.length).toBe(4);
      got.forEach((g, k) => {
        expect(angularSeparationDeg(g.lonDeg, g.latDeg, c.corners[k][0], c.corners[k][1])).toBeLessThan(1e-9);
      });
    }
  });

  it('converts NESTED to RING and back like healpy.nest2ring', () => {
    for (const [nside, nest, ring] of healpix.nestToRing) {
      expect(nestToRing(nside, nest)).toBe(ring);
      expect(ringToNest(nside, ring)).toBe(nest);
    }
  });
});

describe('ang2pixNest on the places a pixel routine can slip, vs healpy 1.16', () => {
  // healpy fixture tests/reference/fixtures/healpix_edges.json (generate_fixtures.py).
  it('puts longitudes exactly 0/90/180/270° in both caps, at |z| = 2/3 and the equator in healpy\'s pixel at every order 0..15', () => {
    expect(edges.axis.length).toBeGreaterThan(100);
    for (const pos of edges.axis) {
      edges.orders.forEach((order, k) => {
        expect([order, pos.lonDeg, pos.latDeg, ang2pixNest(2 ** order, pos.lonDeg, pos.latDeg)]).toEqual([order, pos.lonDeg, pos.latDeg, pos.pix[k]]);
      });
    }
  });

  it('the north-cap case of issue 10: (180°, +60°) at NSIDE 32 is 2799 (healpy), not NSIDE²−1', () => {
    // healpy 1.16: ang2pix(32, 180, 60, nest=True, lonlat=True) = 2799.
    expect(ang2pixNest(32, 180, 60)).toBe(2799);
    for (const order of [0, 4, 10, 15]) {
      const nside = 2 ** order;
      for (const lon of [0, 90, 180, 270]) {
        // The pixel found must contain the point: its centre lies within the max pixel radius.
        const p = ang2pixNest(nside, lon, 60);
        const c = pix2angNest(nside, p);
        expect(angularSeparationDeg(c.lonDeg, c.latDeg, lon, 60)).toBeLessThanOrEqual(maxPixelRadiusDeg(nside) * (1 + 1e-9));
      }
    }
  });

  it('puts points on pixel boundaries (corners and edge midpoints) in healpy\'s pixel at every order 0..15, given healpy\'s z = cos θ', () => {
    expect(edges.boundary.length).toBeGreaterThan(500);
    let checked = 0;
    for (const pos of edges.boundary) {
      const haveSth = pos.theta < 0.01 || pos.theta > 3.14159 - 0.01; // HEALPix C++ ang2pix
      edges.orders.forEach((order, k) => {
        const got = loc2pixNest(2 ** order, order, pos.z, pos.phi, pos.sinTheta, haveSth);
        expect([order, pos.lonDeg, pos.latDeg, got]).toEqual([order, pos.lonDeg, pos.latDeg, pos.pix[k]]);
        checked++;
      });
    }
    expect(checked).toBe(edges.boundary.length * 16);
  });

  it('from (lon, lat), matches healpy on boundary points wherever V8\'s cos θ equals the C library\'s, and otherwise returns a pixel touching the point', () => {
    let sameCos = 0;
    for (const pos of edges.boundary) {
      const cosHere = Math.cos(Math.PI / 2 - pos.latDeg * (Math.PI / 180));
      if (cosHere === pos.z) sameCos++;
      edges.orders.forEach((order, k) => {
        const nside = 2 ** order;
        const got = ang2pixNest(nside, pos.lonDeg, pos.latDeg);
        if (cosHere === pos.z) {
          expect([order, pos.lonDeg, pos.latDeg, got]).toEqual([order, pos.lonDeg, pos.latDeg, pos.pix[k]]);
        } else {
          const c = pix2angNest(nside, got);
          expect(angularSeparationDeg(c.lonDeg, c.latDeg, pos.lonDeg, pos.latDeg)).toBeLessThanOrEqual(maxPixelRadiusDeg(nside) * (1 + 1e-9));
        }
      });
    }
    // One-ulp differences between the two cos implementations are rare.
    expect(sameCos / edges.boundary.length).toBeGreaterThan(0.9);
  });
});

describe('queryDiscNest against testing every pixel', () => {
  // Reference: the definition itself (common practice) — inclusive keeps every pixel whose centre
  // lies within radius + max pixel radius, non-inclusive within the radius — evaluated on every
  // pixel at orders 0..6, for discs centred on the cap meridians 0/90/180/270° and at random.
  it('returns exactly the pixels a full scan returns', () => {
    let seed = 12345;
    const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    for (let order = 0; order <= 6; order++) {
      const nside = 2 ** order;
      const centres = Array.from({ length: 12 * nside * nside }, (_, p) => pix2angNest(nside, p));
      const pixrad = maxPixelRadiusDeg(nside);
      for (let k = 0; k < 40; k++) {
        const lon = k < 16 ? [0, 90, 180, 270][k % 4] : rand() * 360;
        const lat = k < 16 ? [60, -60, 85, -41.9][k >> 2] : (Math.asin(2 * rand() - 1) * 180) / Math.PI;
        const radius = rand() ** 2 * 30;
        for (const inclusive of [true, false]) {
          const limit = radius + (inclusive ? pixrad : 0);
          const want = centres.flatMap((c, p) => (angularSeparationDeg(lon, lat, c.lonDeg, c.latDeg) <= limit ? [p] : []));
          expect(queryDiscNest(nside, lon, lat, radius, inclusive)).toEqual(want);
        }
      }
    }
  });

  it('finds the order-15 pixel of a star at 12:00:00 +60:00:00 in a 1″ disc around it', () => {
    const p = ang2pixNest(32768, 180, 60);
    expect(queryDiscNest(32768, 180, 60, 1 / 3600)).toContain(p);
    expect(queryDiscNest(32768, 180.0001, 60.0001, 1 / 3600)).toContain(p);
  });
});

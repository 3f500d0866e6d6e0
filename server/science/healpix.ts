/**
 * HEALPix (Górski et al. 2005, ApJ 622, 759) in the NESTED scheme. Positions are (longitude,
 * latitude) in degrees in whatever frame the map uses (RA/Dec or l/b).
 *
 * Position → pixel (ang2pixNest) and disc queries (queryDiscNest) are our own code: the npm
 * package @hscmap/healpix 1.4.12 puts every point of the polar caps that lies at longitude exactly
 * 0°, 90°, 180° or 270° into pixel NSIDE²−1 (the point falls on the edge of its base-pixel triangle
 * and a clip branch in its `tu2fpq` returns base pixel 0, corner (1, 1)); its disc query walks
 * rings from pixels found through the same branch. ang2pixNest follows the standard algorithm of
 * Górski et al. 2005 §4–5 as written in the HEALPix C++ library (Healpix_base::loc2pix, NEST
 * branch), including its float operations, so that points on pixel boundaries fall into the same
 * pixel as healpy's. Pixel centres, corners, max pixel radius and NESTED ↔ RING still come from
 * the package (checked against healpy fixtures in tests/science/healpix.test.ts).
 *
 * Orders are limited to 0..15: the package packs the in-face (x, y) bits with 32-bit integer
 * operations, which overflow from order 16 (NSIDE 65536) and return wrong pixels there.
 * At order 15, npix = 12·4^15 ≈ 1.3e10 < 2^53, so pixel numbers are exact JS integers.
 */
import {
  corners_nest,
  max_pixrad,
  nest2ring,
  pix2ang_nest,
  ring2nest,
  vec2ang,
  type V3,
} from '@hscmap/healpix';

/** Highest order the wrapped package computes correctly (see file header). */
export const MAX_HEALPIX_ORDER = 15;

const DEG = Math.PI / 180;

function assertOrder(order: number): void {
  if (!Number.isInteger(order) || order < 0 || order > MAX_HEALPIX_ORDER) {
    throw new RangeError(
      `HEALPix order ${order}: expected an integer from 0 to ${MAX_HEALPIX_ORDER} (NSIDE 1 to 32768); ` +
        'higher orders overflow the 32-bit bit packing of the HEALPix library',
    );
  }
}

/** NSIDE = 2^order, for order 0..15. */
export function nsideForOrder(order: number): number {
  assertOrder(order);
  return 2 ** order;
}

/** order = log2(NSIDE); NSIDE must be a power of two from 1 to 32768. */
export function orderForNside(nside: number): number {
  const order = Math.log2(nside);
  if (!Number.isInteger(order) || order < 0 || order > MAX_HEALPIX_ORDER) {
    throw new RangeError(
      `HEALPix NSIDE ${nside}: expected a power of two from 1 to ${2 ** MAX_HEALPIX_ORDER}`,
    );
  }
  return order;
}

/** Number of pixels, 12·NSIDE². */
export function npixForNside(nside: number): number {
  orderForNside(nside);
  return 12 * nside * nside;
}

function assertPixel(nside: number, ipix: number): void {
  const npix = npixForNside(nside);
  if (!Number.isInteger(ipix) || ipix < 0 || ipix >= npix) {
    throw new RangeError(`HEALPix pixel ${ipix}: expected an integer from 0 to ${npix - 1} at NSIDE ${nside}`);
  }
}

function assertLonLat(lonDeg: number, latDeg: number): void {
  if (!Number.isFinite(lonDeg)) throw new RangeError(`longitude ${lonDeg}: expected a finite number of degrees`);
  if (!(latDeg >= -90 && latDeg <= 90)) throw new RangeError(`latitude ${latDeg}: expected degrees from −90 to 90`);
}

/** Longitude in [0, 360): exact (unchanged) for longitudes already in range. */
function wrapLon(lonDeg: number): number {
  let w = lonDeg % 360;
  if (w < 0) w += 360;
  return w >= 360 ? 0 : w;
}

function lonLatToVec(lonDeg: number, latDeg: number): V3 {
  const cl = Math.cos(latDeg * DEG);
  return [cl * Math.cos(lonDeg * DEG), cl * Math.sin(lonDeg * DEG), Math.sin(latDeg * DEG)];
}

function vecToLonLat(v: V3): { lonDeg: number; latDeg: number } {
  const { theta, phi } = vec2ang(v);
  return { lonDeg: wrapLon(phi / DEG), latDeg: 90 - theta / DEG };
}

/** 2/π and 2/3 exactly as the HEALPix C++ library writes them (Healpix_base.cc). */
const INV_HALFPI = 0.6366197723675813430755350534900574;
const TWOTHIRD = 2 / 3;

/** HEALPix C++ `fmodulo`: v1 mod v2 in [0, v2). */
function fmodulo(v1: number, v2: number): number {
  if (v1 >= 0) return v1 < v2 ? v1 : v1 % v2;
  const tmp = (v1 % v2) + v2;
  return tmp === v2 ? 0 : tmp;
}

/** Interleave the low 15 bits of v with zeros: bit k → bit 2k (< 2^30, safe in int32). */
function spreadBits15(v: number): number {
  let x = v & 0x7fff;
  x = (x | (x << 8)) & 0x00ff00ff;
  x = (x | (x << 4)) & 0x0f0f0f0f;
  x = (x | (x << 2)) & 0x33333333;
  x = (x | (x << 1)) & 0x55555555;
  return x;
}

/** NESTED index from face and in-face (ix, iy); arithmetic, not 32-bit shifts, above 2^30. */
function xyf2nest(nside: number, ix: number, iy: number, face: number): number {
  return face * nside * nside + spreadBits15(ix) + 2 * spreadBits15(iy);
}

/**
 * Górski et al. 2005 position → NESTED pixel from z = cos θ, φ (and sin θ near the poles), a port
 * of HEALPix C++ Healpix_base::loc2pix (NEST). Equatorial belt |z| ≤ 2/3: the indices of the
 * ascending and descending edge lines give face and (ix, iy); polar caps: the distance from the
 * pole, nside·sqrt(3(1−|z|)), split by the position tp within the quadrant. Exported for tests
 * that feed it healpy's own z = cos θ.
 */
export function loc2pixNest(nside: number, order: number, z: number, phi: number, sth: number, haveSth: boolean): number {
  const za = Math.abs(z);
  const tt = fmodulo(phi * INV_HALFPI, 4.0); // in [0, 4)
  if (za <= TWOTHIRD) {
    const temp1 = nside * (0.5 + tt);
    const temp2 = nside * (z * 0.75);
    const jp = Math.trunc(temp1 - temp2); // index of ascending edge line
    const jm = Math.trunc(temp1 + temp2); // index of descending edge line
    const ifp = jp >> order; // in {0, 4}
    const ifm = jm >> order;
    const face = ifp === ifm ? ifp | 4 : ifp < ifm ? ifp : ifm + 8;
    const ix = jm & (nside - 1);
    const iy = nside - (jp & (nside - 1)) - 1;
    return xyf2nest(nside, ix, iy, face);
  }
  const ntt = Math.min(3, Math.trunc(tt));
  const tp = tt - ntt;
  const tmp = za < 0.99 || !haveSth ? nside * Math.sqrt(3 * (1 - za)) : (nside * sth) / Math.sqrt((1 + za) / 3);
  let jp = Math.trunc(tp * tmp); // increasing edge line index
  let jm = Math.trunc((1.0 - tp) * tmp); // decreasing edge line index
  jp = Math.min(jp, nside - 1); // points too close to the boundary
  jm = Math.min(jm, nside - 1);
  return z > 0 ? xyf2nest(nside, nside - jm - 1, nside - jp - 1, ntt) : xyf2nest(nside, jp, jm, ntt + 8);
}

/**
 * NESTED pixel containing (lon, lat) in degrees. θ = π/2 − lat·π/180 and φ = lon·π/180 as healpy
 * computes them with lonlat=True; sin θ is used within 0.01 rad of a pole (HEALPix C++ ang2pix).
 * A point lying exactly on a pixel boundary (to the last bit) can fall on the other side from
 * healpy's choice where V8's Math.cos differs from the C library's cos by one unit in the last
 * place; given the same z, the pixel is healpy's (tests/science/healpix.test.ts).
 */
export function ang2pixNest(nside: number, lonDeg: number, latDeg: number): number {
  const order = orderForNside(nside);
  assertLonLat(lonDeg, latDeg);
  const theta = Math.PI / 2 - latDeg * DEG;
  const phi = wrapLon(lonDeg) * DEG;
  const haveSth = theta < 0.01 || theta > 3.14159 - 0.01;
  return loc2pixNest(nside, order, Math.cos(theta), phi, haveSth ? Math.sin(theta) : 0, haveSth);
}

/** Centre of a NESTED pixel, degrees. */
export function pix2angNest(nside: number, ipix: number): { lonDeg: number; latDeg: number } {
  assertPixel(nside, ipix);
  const { theta, phi } = pix2ang_nest(nside, ipix);
  return { lonDeg: wrapLon(phi / DEG), latDeg: 90 - theta / DEG };
}

/** Angle between unit vectors via atan2(|a×b|, a·b): accurate at small angles. */
function vecAngle(a: V3, b: V3): number {
  const cx = a[1] * b[2] - a[2] * b[1];
  const cy = a[2] * b[0] - a[0] * b[2];
  const cz = a[0] * b[1] - a[1] * b[0];
  return Math.atan2(Math.hypot(cx, cy, cz), a[0] * b[0] + a[1] * b[1] + a[2] * b[2]);
}

const JRLL = [2, 2, 2, 2, 3, 3, 3, 3, 4, 4, 4, 4];
const JPLL = [1, 3, 5, 7, 0, 2, 4, 6, 1, 3, 5, 7];

/** Inverse of spreadBits15: the even bits of v (v < 2^30) packed together. */
function compressBits15(v: number): number {
  let x = v & 0x55555555;
  x = (x | (x >>> 1)) & 0x33333333;
  x = (x | (x >>> 2)) & 0x0f0f0f0f;
  x = (x | (x >>> 4)) & 0x00ff00ff;
  x = (x | (x >>> 8)) & 0x0000ffff;
  return x;
}

/**
 * Unit vector of a NESTED pixel centre (HEALPix C++ Healpix_base::pix2loc, NEST): ring number
 * jr from face and (ix, iy), z on that ring, and the pixel's place in the ring for φ.
 */
function pixCentreVec(nside: number, ipix: number): V3 {
  const npface = nside * nside;
  const face = Math.floor(ipix / npface);
  const inFace = ipix - face * npface;
  const ix = compressBits15(inFace);
  const iy = compressBits15(inFace >>> 1);
  const jr = JRLL[face] * nside - ix - iy - 1;
  const fact2 = 4 / (12 * npface);
  let nr: number;
  let z: number;
  let sth: number;
  let kshift = 0;
  if (jr < nside) {
    nr = jr;
    const tmp = (nr * nr) / (3 * npface);
    z = 1 - tmp;
    sth = Math.sqrt(tmp * (2 - tmp));
  } else if (jr > 3 * nside) {
    nr = 4 * nside - jr;
    const tmp = (nr * nr) / (3 * npface);
    z = tmp - 1;
    sth = Math.sqrt(tmp * (2 - tmp));
  } else {
    nr = nside;
    z = (2 * nside - jr) * 2 * nside * fact2;
    sth = Math.sqrt((1 - z) * (1 + z));
    kshift = (jr - nside) & 1;
  }
  let jp = (JPLL[face] * nr + ix - iy + 1 + kshift) / 2;
  if (jp > 4 * nside) jp -= 4 * nside;
  if (jp < 1) jp += 4 * nside;
  const phi = (jp - (kshift + 1) * 0.5) * (Math.PI / 2 / nr);
  return [sth * Math.cos(phi), sth * Math.sin(phi), z];
}

const maxPixradCache = new Map<number, number>();
function maxPixradRad(nside: number): number {
  let r = maxPixradCache.get(nside);
  if (r === undefined) maxPixradCache.set(nside, (r = max_pixrad(nside)));
  return r;
}

/**
 * NESTED pixels of a disc, sorted ascending, by descent through the nested hierarchy: a pixel of
 * order l is opened when its centre lies within the target distance plus a bound on how far any
 * point of it lies from its centre: 1.1 × the max centre-to-corner distance at that order (a pixel
 * is close to a convex quadrilateral, whose farthest point from an inner point is a corner; the
 * 10 % covers the curved edges of coarse pixels). A test checks the result against testing every
 * pixel's centre at orders 0–6, including centres at longitudes 0/90/180/270° in both caps. Target pixels are kept by their centres:
 * inclusive = true keeps pixels whose centres lie within radius + max pixel radius (every pixel
 * that overlaps the disc, plus some near the edge that do not; the criterion of the earlier
 * package query, checked against healpy's inclusive query); inclusive = false keeps only pixels
 * whose centres lie inside the disc (healpy's non-inclusive query). Callers that need the stars
 * inside a cone must still test each star's separation.
 */
export function queryDiscNest(
  nside: number,
  lonDeg: number,
  latDeg: number,
  radiusDeg: number,
  inclusive = true,
): number[] {
  const order = orderForNside(nside);
  assertLonLat(lonDeg, latDeg);
  if (!(radiusDeg >= 0 && radiusDeg < 90)) {
    throw new RangeError(`disc radius ${radiusDeg}°: expected degrees from 0 to below 90`);
  }
  const c = lonLatToVec(lonDeg, latDeg);
  const limit = radiusDeg * DEG + (inclusive ? maxPixradRad(nside) : 0);
  const out: number[] = [];
  let level = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11];
  for (let l = 0; l <= order; l++) {
    const ns = 2 ** l;
    const last = l === order;
    const reach = last ? limit : limit + 1.1 * maxPixradRad(ns) + 1e-12;
    // Opening test by cosine (cheap); the kept pixels get the exact small-angle form.
    const cosReach = reach >= Math.PI ? -2 : Math.cos(reach) - 1e-12;
    const next: number[] = [];
    for (const p of level) {
      const v = pixCentreVec(ns, p);
      if (c[0] * v[0] + c[1] * v[1] + c[2] * v[2] < cosReach) continue;
      if (!last) for (let k = 0; k < 4; k++) next.push(4 * p + k);
      else if (vecAngle(c, v) <= limit) out.push(p);
    }
    level = next;
  }
  return out.sort((a, b) => a - b);
}

/** Maximum angular distance from a pixel centre to its corners at this NSIDE, degrees. */
export function maxPixelRadiusDeg(nside: number): number {
  orderForNside(nside);
  return maxPixradRad(nside) / DEG;
}

/** The four corners of a NESTED pixel (north, west, south, east), degrees. */
export function pixelCornersNest(nside: number, ipix: number): { lonDeg: number; latDeg: number }[] {
  assertPixel(nside, ipix);
  return corners_nest(nside, ipix).map(vecToLonLat);
}

/** NESTED → RING pixel number. */
export function nestToRing(nside: number, ipix: number): number {
  assertPixel(nside, ipix);
  return nest2ring(nside, ipix);
}

/** RING → NESTED pixel number. */
export function ringToNest(nside: number, ipix: number): number {
  assertPixel(nside, ipix);
  return ring2nest(nside, ipix);
}

/**
 * HEALPix (Górski et al. 2005, ApJ 622, 759) in the NESTED scheme, thin wrapper over the npm
 * package @hscmap/healpix. Positions are (longitude, latitude) in degrees in whatever frame the
 * map uses (RA/Dec or l/b); the package works in colatitude θ = 90° − lat and φ = lon, radians.
 *
 * Orders are limited to 0..15: the package packs the in-face (x, y) bits with 32-bit integer
 * operations, which overflow from order 16 (NSIDE 65536) and return wrong pixels there.
 * At order 15, npix = 12·4^15 ≈ 1.3e10 < 2^53, so pixel numbers are exact JS integers.
 */
import {
  ang2pix_nest,
  corners_nest,
  max_pixrad,
  nest2ring,
  pix2ang_nest,
  query_disc_inclusive_nest,
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

function wrapLon(lonDeg: number): number {
  const w = ((lonDeg % 360) + 360) % 360;
  return w === 360 ? 0 : w;
}

function lonLatToVec(lonDeg: number, latDeg: number): V3 {
  const cl = Math.cos(latDeg * DEG);
  return [cl * Math.cos(lonDeg * DEG), cl * Math.sin(lonDeg * DEG), Math.sin(latDeg * DEG)];
}

function vecToLonLat(v: V3): { lonDeg: number; latDeg: number } {
  const { theta, phi } = vec2ang(v);
  return { lonDeg: wrapLon(phi / DEG), latDeg: 90 - theta / DEG };
}

/** NESTED pixel containing (lon, lat) in degrees. */
export function ang2pixNest(nside: number, lonDeg: number, latDeg: number): number {
  orderForNside(nside);
  assertLonLat(lonDeg, latDeg);
  return ang2pix_nest(nside, (90 - latDeg) * DEG, wrapLon(lonDeg) * DEG);
}

/** Centre of a NESTED pixel, degrees. */
export function pix2angNest(nside: number, ipix: number): { lonDeg: number; latDeg: number } {
  assertPixel(nside, ipix);
  const { theta, phi } = pix2ang_nest(nside, ipix);
  return { lonDeg: wrapLon(phi / DEG), latDeg: 90 - theta / DEG };
}

/**
 * NESTED pixels of a disc, sorted ascending. The package implements only the inclusive query,
 * and it is approximate: it walks the rings the disc spans and keeps pixels whose centres lie
 * within radius + the maximum centre-to-corner distance. Checked against healpy: it contains
 * every pixel that overlaps the disc, plus some near the edge that do not, and nothing beyond
 * healpy's inclusive query of a disc enlarged by 1.01 × that distance. Callers that need the
 * stars inside a cone must still test each star's separation.
 * inclusive = false keeps only pixels whose centres lie inside the disc (exact).
 */
export function queryDiscNest(
  nside: number,
  lonDeg: number,
  latDeg: number,
  radiusDeg: number,
  inclusive = true,
): number[] {
  orderForNside(nside);
  assertLonLat(lonDeg, latDeg);
  if (!(radiusDeg >= 0 && radiusDeg < 90)) {
    throw new RangeError(`disc radius ${radiusDeg}°: expected degrees from 0 to below 90`);
  }
  const centre = lonLatToVec(lonDeg, latDeg);
  const radius = radiusDeg * DEG;
  const out: number[] = [];
  const seen = new Set<number>();
  query_disc_inclusive_nest(nside, centre, radius, (ipix) => {
    if (seen.has(ipix)) return;
    seen.add(ipix);
    if (!inclusive) {
      const { theta, phi } = pix2ang_nest(nside, ipix);
      const st = Math.sin(theta);
      const v: V3 = [st * Math.cos(phi), st * Math.sin(phi), Math.cos(theta)];
      // Angle between unit vectors via atan2(|a×b|, a·b): accurate at small angles.
      const cx = centre[1] * v[2] - centre[2] * v[1];
      const cy = centre[2] * v[0] - centre[0] * v[2];
      const cz = centre[0] * v[1] - centre[1] * v[0];
      const dot = centre[0] * v[0] + centre[1] * v[1] + centre[2] * v[2];
      if (Math.atan2(Math.hypot(cx, cy, cz), dot) > radius) return;
    }
    out.push(ipix);
  });
  return out.sort((a, b) => a - b);
}

/** Maximum angular distance from a pixel centre to its corners at this NSIDE, degrees. */
export function maxPixelRadiusDeg(nside: number): number {
  orderForNside(nside);
  return max_pixrad(nside) / DEG;
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

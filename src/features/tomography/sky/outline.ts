/**
 * HEALPix pixel outlines for the sky map, as GeoJSON polygons in the frame the map shows.
 *
 * pixelCornersNest gives the four corners; the edges between them are not great circles (in the
 * equatorial zone they are straight in (φ, z = sin b), in the polar caps curves of that plane),
 * so each edge is densified linearly in (lon, z) before d3-geo joins the points with short
 * great-circle arcs. The ring is then turned into the display frame point by point, and wound
 * clockwise as d3-geo expects of a polygon smaller than a hemisphere. d3-geo cuts a polygon that
 * crosses the map's edge (the antimeridian of the projection) into pieces on either side.
 */
import { geoArea } from 'd3-geo';
import type { Polygon, Position } from 'geojson';
import { galacticToIcrs, icrsToGalactic } from '@science/frames';
import { maxPixelRadiusDeg, pixelCornersNest } from '@science/healpix';
import type { CoordSys } from '../types';

const DEG = Math.PI / 180;
/** Finer than this (degrees along an edge) looks straight at any map size the page draws. */
const EDGE_STEP_DEG = 0.75;

/** Points per edge for a pixel of this NSIDE: a few for big pixels, one (no extra point) for small ones. */
export function edgeSteps(nside: number): number {
  const edgeDeg = 1.5 * maxPixelRadiusDeg(nside);
  return Math.max(1, Math.min(16, Math.ceil(edgeDeg / EDGE_STEP_DEG)));
}

/** lon/lat points along one pixel edge, from a to b (a included, b not), interpolated in (lon, sin lat). */
function edgePoints(a: { lonDeg: number; latDeg: number }, b: { lonDeg: number; latDeg: number }, steps: number): Position[] {
  const POLE = 89.9999;
  // a corner on a pole has no longitude of its own: it takes the other end's (the edge is a meridian)
  let lonA = Math.abs(a.latDeg) > POLE ? b.lonDeg : a.lonDeg;
  let lonB = Math.abs(b.latDeg) > POLE ? a.lonDeg : b.lonDeg;
  // shortest way round
  if (lonB - lonA > 180) lonB -= 360;
  if (lonA - lonB > 180) lonA -= 360;
  const zA = Math.sin(a.latDeg * DEG);
  const zB = Math.sin(b.latDeg * DEG);
  const out: Position[] = [];
  for (let i = 0; i < steps; i++) {
    const f = i / steps;
    const lon = lonA + f * (lonB - lonA);
    const z = Math.max(-1, Math.min(1, zA + f * (zB - zA)));
    out.push([lon, Math.asin(z) / DEG]);
  }
  return out;
}

/** Turn a (lon, lat) point of frame `from` into frame `to`. */
export function toFrame(from: CoordSys, to: CoordSys, lonDeg: number, latDeg: number): [number, number] {
  if (from === to) return [lonDeg, latDeg];
  if (from === 'G') {
    const { raDeg, decDeg } = galacticToIcrs(lonDeg, latDeg);
    return [raDeg, decDeg];
  }
  const { lDeg, bDeg } = icrsToGalactic(lonDeg, latDeg);
  return [lDeg, bDeg];
}

/**
 * The outline of nested pixel `ipix` (a pixel of frame `cellFrame`) as a GeoJSON polygon in
 * frame `mapFrame`. Longitudes are as d3-geo reads them (east positive); the map flips them.
 */
export function pixelPolygon(nside: number, ipix: number, cellFrame: CoordSys, mapFrame: CoordSys): Polygon {
  const corners = pixelCornersNest(nside, ipix);
  const steps = edgeSteps(nside);
  const ring: Position[] = [];
  for (let i = 0; i < corners.length; i++) ring.push(...edgePoints(corners[i], corners[(i + 1) % corners.length], steps));
  let shown = ring.map(([lon, lat]) => toFrame(cellFrame, mapFrame, lon, lat) as Position);
  shown.push(shown[0]);
  let polygon: Polygon = { type: 'Polygon', coordinates: [shown] };
  // wrong winding reads as "the whole sky except this pixel"
  if (geoArea(polygon) > 2 * Math.PI) {
    shown = shown.slice().reverse();
    polygon = { type: 'Polygon', coordinates: [shown] };
  }
  return polygon;
}

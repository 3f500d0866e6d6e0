import { geoArea, geoGraticule10, geoPath } from 'd3-geo';
import { geoHammer } from 'd3-geo-projection';
import type { Polygon } from 'geojson';
import { useMemo } from 'react';
import { pixelCornersNest } from '@science/healpix';
import type { MaskCell } from '../api/maskSummary';

const W = 720;
const H = 380;
const SPHERE = { type: 'Sphere' } as const;

/** A HEALPix cell as a polygon through its four corners, wound so that it encloses the small side. */
function cellPolygon(nside: number, ipix: number): Polygon {
  const ring = pixelCornersNest(nside, ipix).map((p) => [p.lonDeg, p.latDeg]);
  const poly: Polygon = { type: 'Polygon', coordinates: [[...ring, ring[0]]] };
  if (geoArea(poly) > 2 * Math.PI) poly.coordinates[0].reverse();
  return poly;
}

const fmt = (x: number | null, digits = 1) => (x === null ? '—' : x.toFixed(digits));

/**
 * Whole-sky preview in Hammer's equal-area projection, longitude growing to the left, in the
 * run's own frame: flagged cells in amber, the other cells of the run in pale lilac.
 */
export function MaskPreview({ cells, nside, frame }: { cells: MaskCell[]; nside: number; frame: 'G' | 'C' }) {
  const { shapes, outline, grid } = useMemo(() => {
    const projection = geoHammer().reflectX(true).fitExtent([[8, 8], [W - 8, H - 8]], SPHERE);
    const p = geoPath(projection);
    return {
      outline: p(SPHERE) ?? '',
      grid: p(geoGraticule10()) ?? '',
      shapes: cells.map((c) => ({ cell: c, d: p(cellPolygon(nside, c.ipix)) ?? '' })),
    };
  }, [cells, nside]);
  const lon = frame === 'G' ? 'l' : 'RA';
  const lat = frame === 'G' ? 'b' : 'Dec';
  return (
    <figure className="space-y-2">
      <svg viewBox={`0 0 ${W} ${H}`} className="w-full" role="img" aria-label={`Mask preview: ${cells.filter((c) => c.flagged).length} flagged of ${cells.length} cells`} data-testid="mask-preview">
        <path d={outline} fill="#fbfaf6" stroke="#cfcab9" />
        <path d={grid} fill="none" stroke="#e2dfd5" strokeWidth={0.6} />
        {shapes.map(({ cell, d }) => (
          <path key={cell.ipix} d={d} data-flagged={cell.flagged ? 1 : 0} fill={cell.flagged ? '#f2b544' : '#c9cdf2'} stroke={cell.flagged ? '#b9791a' : '#9aa3e6'} strokeWidth={0.5}>
            <title>
              {`cell ${cell.ipix} · ${lon} ${cell.lonDeg.toFixed(2)}°, ${lat} ${cell.latDeg.toFixed(2)}° · ${cell.nLayers} layers · largest jump ${fmt(cell.maxJumpDeg)}° (${fmt(cell.maxJumpSignificance)}σ)${cell.flagged ? ' · flagged' : ''}`}
            </title>
          </path>
        ))}
      </svg>
      <figcaption className="flex flex-wrap gap-4 text-xs text-muted">
        <span><span className="mr-1 inline-block h-2.5 w-2.5 rounded-sm bg-amber align-middle" />flagged</span>
        <span><span className="mr-1 inline-block h-2.5 w-2.5 rounded-sm align-middle" style={{ background: '#c9cdf2' }} />in the run, not flagged</span>
        <span>Hammer equal-area projection, {frame === 'G' ? 'Galactic' : 'equatorial ICRS'} frame, longitude increasing to the left.</span>
      </figcaption>
    </figure>
  );
}

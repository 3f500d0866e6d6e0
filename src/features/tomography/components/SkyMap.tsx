import { geoPath } from 'd3-geo';
import { geoMollweide } from 'd3-geo-projection';
import type { LineString, MultiLineString } from 'geojson';
import { useId, useMemo, useRef, useState, type PointerEvent } from 'react';
import { icrsToGalactic } from '@science/frames';
import { pixelPolygon, toFrame } from '../sky/outline';
import { deg, frameName, frameTitle, latName, lonName } from '../sky/format';
import { jumpColour, layerColour } from '../sky/palette';
import type { CoordSys, SkyCell } from '../types';
import { useElementWidth } from './useElementWidth';

export type ColourBy = 'layers' | 'jump';

const PAD = { left: 46, right: 14, top: 14, bottom: 14 };
const SPHERE = { type: 'Sphere' } as const;
const MAX_ZOOM = 16;
/** Finer grid once zoomed in this far. */
const FINE_GRID_ZOOM = 4;

/** Meridians and parallels every `step` degrees, as lines in the map's own frame. */
function graticule(step: number): MultiLineString {
  const lines: [number, number][][] = [];
  for (let lon = -180 + step; lon < 180; lon += step) lines.push(Array.from({ length: 181 }, (_, i) => [lon, -90 + i] as [number, number]));
  for (let lat = -90 + step; lat < 90; lat += step) lines.push(Array.from({ length: 361 }, (_, i) => [-180 + i, lat] as [number, number]));
  return { type: 'MultiLineString', coordinates: lines };
}

/** The other frame's equator drawn in this one: the Galactic plane on an equatorial map, the celestial equator on a Galactic one. */
function otherEquator(mapFrame: CoordSys): LineString {
  const other: CoordSys = mapFrame === 'G' ? 'C' : 'G';
  return { type: 'LineString', coordinates: Array.from({ length: 361 }, (_, i) => toFrame(other, mapFrame, i, 0)) };
}

/** A cell's centre in the frame the map shows. */
export function cellCentre(c: SkyCell, runFrame: CoordSys, mapFrame: CoordSys): { lon: number; lat: number } {
  if (mapFrame === 'C') return { lon: c.ra_deg, lat: c.dec_deg };
  if (runFrame === 'G') return { lon: c.lon_deg, lat: c.lat_deg };
  const g = icrsToGalactic(c.ra_deg, c.dec_deg);
  return { lon: g.lDeg, lat: g.bDeg };
}

const lonLabel = (mapFrame: CoordSys, lon: number) => {
  const l = (lon + 360) % 360;
  if (mapFrame === 'G') return `${l}°`;
  const h = l / 15;
  return Number.isInteger(h) ? `${h}h` : `${Math.floor(h)}h${Math.round((h % 1) * 60)}m`;
};
const latLabel = (b: number) => `${b > 0 ? '+' : b < 0 ? '−' : ''}${Math.abs(b)}°`;

interface Hover {
  cell: SkyCell;
  x: number;
  y: number;
}

/** Zoom k about the middle of the map, then a pan of (x, y) screen pixels. */
interface View {
  k: number;
  x: number;
  y: number;
}
const WHOLE_SKY: View = { k: 1, x: 0, y: 0 };

/**
 * Whole-sky map in Mollweide's equal-area projection, longitude increasing to the left (east),
 * centred on longitude 0. Each cell is its HEALPix pixel; hover names it, a click opens it. The
 * buttons zoom in and out, and a zoomed map can be dragged.
 */
export function SkyMap({
  cells,
  nside,
  runFrame,
  mapFrame,
  colourBy,
  onOpen,
}: {
  cells: SkyCell[];
  nside: number;
  runFrame: CoordSys;
  mapFrame: CoordSys;
  colourBy: ColourBy;
  onOpen: (cell: SkyCell) => void;
}) {
  const { ref, width } = useElementWidth<HTMLDivElement>(1100);
  const height = Math.round((width - PAD.left - PAD.right) / 2) + PAD.top + PAD.bottom;
  const [hover, setHover] = useState<Hover | null>(null);
  const [view, setView] = useState<View>(WHOLE_SKY);
  const drag = useRef<{ x: number; y: number; from: View; moved: boolean } | null>(null);
  const clipId = useId();

  const projection = useMemo(
    () =>
      geoMollweide()
        .reflectX(true)
        .fitExtent(
          [
            [PAD.left, PAD.top],
            [width - PAD.right, height - PAD.bottom],
          ],
          SPHERE,
        ),
    [width, height],
  );
  const path = useMemo(() => geoPath(projection), [projection]);
  const gridStep = view.k >= FINE_GRID_ZOOM ? 10 : 30;
  const backdrop = useMemo(() => ({ sphere: path(SPHERE) ?? '', grid: path(graticule(gridStep)) ?? '', other: path(otherEquator(mapFrame)) ?? '' }), [path, mapFrame, gridStep]);
  // outlines depend on the frames only; the projection turns them into paths
  const polygons = useMemo(() => cells.map((c) => ({ cell: c, polygon: pixelPolygon(nside, c.ipix, runFrame, mapFrame) })), [cells, nside, runFrame, mapFrame]);
  const shapes = useMemo(() => polygons.map(({ cell, polygon }) => ({ cell, d: path(polygon) ?? '' })), [polygons, path]);

  const cx = width / 2;
  const cy = height / 2;
  const toScreen = (p: [number, number] | null): [number, number] => (p ? [cx + view.x + (p[0] - cx) * view.k, cy + view.y + (p[1] - cy) * view.k] : [Number.NaN, Number.NaN]);
  const inner = { x0: PAD.left, x1: width - PAD.right, y0: PAD.top, y1: height - PAD.bottom };

  // labels stay in the margins and along the equator (or the nearest visible parallel) whatever the zoom
  const labels = (() => {
    const equatorY = toScreen(projection([0, 0]))[1];
    const labelY = Math.min(inner.y1 - 16, Math.max(inner.y0 + 4, equatorY));
    const atLat = projection.invert?.([cx, cy + (labelY - cy - view.y) / view.k])?.[1] ?? 0;
    const lon = [];
    for (let l = 0; l < 360; l += gridStep * 2) {
      if (view.k === 1 && l === 180) continue;
      const [x, y] = toScreen(projection([l, atLat]));
      if (x > inner.x0 + 12 && x < inner.x1 - 12) lon.push({ key: `lon${l}`, x, y: y + 13, text: lonLabel(mapFrame, l) });
    }
    const lat = [];
    for (let b = -90 + gridStep; b < 90; b += gridStep) {
      const [edgeX, y] = toScreen(projection([179.999, b]));
      if (y > inner.y0 + 4 && y < inner.y1 - 2) lat.push({ key: `lat${b}`, x: Math.max(inner.x0, edgeX) - 6, y: y + 3.5, text: latLabel(b) });
    }
    return { lon, lat };
  })();

  const move = (e: PointerEvent, cell: SkyCell) => {
    if (drag.current?.moved) return;
    const box = ref.current?.getBoundingClientRect();
    if (!box) return;
    setHover({ cell, x: e.clientX - box.left, y: e.clientY - box.top });
  };

  const clampView = (v: View): View => {
    const k = Math.min(MAX_ZOOM, Math.max(1, v.k));
    const mx = ((k - 1) * width) / 2;
    const my = ((k - 1) * height) / 2;
    return { k, x: Math.min(mx, Math.max(-mx, v.x)), y: Math.min(my, Math.max(-my, v.y)) };
  };
  const zoomBy = (f: number) => setView((v) => clampView({ k: v.k * f, x: v.x * f, y: v.y * f }));

  const onPointerDown = (e: PointerEvent<SVGSVGElement>) => {
    if (view.k === 1 || e.button !== 0) return;
    drag.current = { x: e.clientX, y: e.clientY, from: view, moved: false };
  };
  const onPointerMove = (e: PointerEvent<SVGSVGElement>) => {
    const d = drag.current;
    if (!d) return;
    const dx = e.clientX - d.x;
    const dy = e.clientY - d.y;
    if (!d.moved && Math.hypot(dx, dy) < 4) return;
    if (!d.moved) {
      d.moved = true;
      e.currentTarget.setPointerCapture(e.pointerId);
      setHover(null);
    }
    setView(clampView({ k: d.from.k, x: d.from.x + dx, y: d.from.y + dy }));
  };
  const endDrag = () => {
    // let the click that ends a drag pass before forgetting it
    setTimeout(() => (drag.current = null), 0);
  };
  const open = (c: SkyCell) => {
    if (!drag.current?.moved) onOpen(c);
  };

  const transform = `translate(${cx + view.x} ${cy + view.y}) scale(${view.k}) translate(${-cx} ${-cy})`;
  const top = shapes.find((s) => s.cell.ipix === hover?.cell.ipix);

  return (
    <div ref={ref} className="relative w-full select-none">
      <svg
        width={width}
        height={height}
        viewBox={`0 0 ${width} ${height}`}
        role="img"
        aria-label={`Sky map of ${cells.length} cells, ${frameName(mapFrame)} coordinates`}
        data-testid="sky-map"
        data-frame={mapFrame}
        data-colour-by={colourBy}
        data-zoom={view.k}
        onPointerLeave={() => setHover(null)}
        onPointerDown={onPointerDown}
        onPointerMove={onPointerMove}
        onPointerUp={endDrag}
        onPointerCancel={endDrag}
        className={`block touch-none ${view.k > 1 ? 'cursor-grab active:cursor-grabbing' : ''}`}
      >
        <defs>
          <clipPath id={clipId}>
            <rect x={inner.x0} y={inner.y0} width={inner.x1 - inner.x0} height={inner.y1 - inner.y0} />
          </clipPath>
        </defs>
        <g clipPath={view.k > 1 ? `url(#${clipId})` : undefined}>
          <g transform={transform}>
            <path d={backdrop.sphere} fill="#13183a" />
            <path d={backdrop.grid} fill="none" stroke="#6c7bd9" strokeOpacity={0.32} strokeWidth={0.7} vectorEffect="non-scaling-stroke" />
            <path d={backdrop.other} fill="none" stroke="#e6e8fa" strokeOpacity={0.45} strokeWidth={0.9} strokeDasharray="4 3" vectorEffect="non-scaling-stroke" data-testid="other-equator" />
            <g>
              {shapes.map(({ cell, d }) => (
                <path
                  key={cell.ipix}
                  d={d}
                  data-testid="sky-cell"
                  data-ipix={cell.ipix}
                  data-layers={cell.n_layers}
                  fill={colourBy === 'layers' ? layerColour(cell.n_layers) : jumpColour(cell.max_jump_deg)}
                  stroke="#0b0f2a"
                  strokeWidth={0.4}
                  vectorEffect="non-scaling-stroke"
                  className="cursor-pointer"
                  onPointerEnter={(e) => move(e, cell)}
                  onPointerMove={(e) => move(e, cell)}
                  onClick={() => open(cell)}
                />
              ))}
            </g>
            {/* the hovered cell again on top, outlined, so its edge is not hidden by its neighbours */}
            {top && <path d={top.d} fill="none" stroke="#ffffff" strokeWidth={1.6} vectorEffect="non-scaling-stroke" pointerEvents="none" />}
            <path d={backdrop.sphere} fill="none" stroke="#1f2657" strokeWidth={1.2} vectorEffect="non-scaling-stroke" />
          </g>
        </g>
        <g fontSize={10} className="num" aria-hidden>
          {labels.lon.map((l) => (
            <text key={l.key} x={l.x} y={l.y} textAnchor="middle" fill="#dfe2fb" stroke="#13183a" strokeWidth={2.5} paintOrder="stroke" data-testid="lon-label">
              {l.text}
            </text>
          ))}
          {labels.lat.map((l) => (
            <text key={l.key} x={l.x} y={l.y} textAnchor="end" fill="#6a6d80" data-testid="lat-label">
              {l.text}
            </text>
          ))}
        </g>
      </svg>
      <div className="absolute top-3 right-3 flex overflow-hidden rounded-md border border-night-2 bg-night/90 text-sm text-veil-soft shadow">
        <button type="button" className="px-2.5 py-1 hover:bg-night-2 disabled:opacity-40" onClick={() => zoomBy(2)} disabled={view.k >= MAX_ZOOM} aria-label="Zoom in">
          +
        </button>
        <button type="button" className="border-l border-night-2 px-2.5 py-1 hover:bg-night-2 disabled:opacity-40" onClick={() => zoomBy(0.5)} disabled={view.k <= 1} aria-label="Zoom out">
          −
        </button>
        <button type="button" className="border-l border-night-2 px-2.5 py-1 text-xs hover:bg-night-2 disabled:opacity-40" onClick={() => setView(WHOLE_SKY)} disabled={view.k === 1}>
          Whole sky
        </button>
      </div>
      {hover && <CellTooltip hover={hover} runFrame={runFrame} mapFrame={mapFrame} nside={nside} width={width} />}
      <p className="mt-2 text-xs text-muted">
        {frameTitle(mapFrame)} coordinates, Mollweide equal-area projection centred on {lonName(mapFrame)} = 0, {lonName(mapFrame)} increasing to the left (east); grid every {gridStep}°
        {mapFrame === 'C' ? ` (${gridStep / 15}h in RA)` : ''}. Dashed: {mapFrame === 'G' ? 'the celestial equator' : 'the Galactic plane'}.{view.k > 1 ? ` Zoom ×${view.k}: drag to move.` : ''}
      </p>
    </div>
  );
}

function CellTooltip({ hover, runFrame, mapFrame, nside, width }: { hover: Hover; runFrame: CoordSys; mapFrame: CoordSys; nside: number; width: number }) {
  const c = hover.cell;
  const centre = cellCentre(c, runFrame, mapFrame);
  const left = hover.x > width - 260 ? hover.x - 250 : hover.x + 14;
  return (
    <div
      role="tooltip"
      data-testid="cell-tooltip"
      className="pointer-events-none absolute z-10 w-60 rounded-lg border border-night-2 bg-night/95 px-3 py-2 text-xs text-veil-soft shadow-lg"
      style={{ left, top: Math.max(0, hover.y - 12) }}
    >
      <div className="mb-1 text-sm font-semibold text-white">
        Cell {c.ipix} <span className="font-normal text-veil-soft/80">· NSIDE {nside}, nested</span>
      </div>
      <dl className="num grid grid-cols-[auto_1fr] gap-x-3 gap-y-0.5">
        <dt className="text-veil-soft/70">centre</dt>
        <dd>
          {lonName(mapFrame)} {deg(centre.lon, 2)}, {latName(mapFrame)} {deg(centre.lat, 2, true)}
        </dd>
        <dt className="text-veil-soft/70">stars</dt>
        <dd>{c.n_stars}</dd>
        <dt className="text-veil-soft/70">layers</dt>
        <dd>
          {c.n_layers} <span className="text-veil-soft/70">({Math.round(100 * c.layer_support)} % of draws)</span>
        </dd>
        <dt className="text-veil-soft/70">largest jump</dt>
        <dd>{c.max_jump_deg == null ? 'none (one layer)' : `${deg(c.max_jump_deg, 1)} (${c.max_jump_significance?.toFixed(1)} σ)`}</dd>
        {c.complex && (
          <>
            <dt className="text-veil-soft/70">flag</dt>
            <dd className="text-amber">complex sightline</dd>
          </>
        )}
      </dl>
      {runFrame !== mapFrame && <div className="mt-1 text-[10px] text-veil-soft/60">pixel of the run’s {frameName(runFrame)} grid</div>}
    </div>
  );
}

import type { MaskCell } from '../api/maskSummary';

const SHOWN = 200;
const fmt = (x: number | null, digits = 1) => (x === null ? '—' : x.toFixed(digits));

/** The flagged cells as a table (the first 200; the CSV download has them all). */
export function FlaggedList({ cells, frame }: { cells: MaskCell[]; frame: 'G' | 'C' }) {
  const flagged = cells.filter((c) => c.flagged);
  if (!flagged.length) return <p className="text-sm text-muted">No cell meets these criteria.</p>;
  return (
    <div className="max-h-96 overflow-auto">
      <table className="w-full text-left text-sm" data-testid="flagged-cells">
        <thead className="sticky top-0 border-b border-line bg-card text-xs font-medium text-muted">
          <tr>
            <th className="py-2">Cell</th><th>{frame === 'G' ? 'l' : 'RA'} (°)</th><th>{frame === 'G' ? 'b' : 'Dec'} (°)</th><th>Stars</th><th>Layers</th><th>Largest |Δθ| (°)</th><th>Significance (σ)</th><th>Layers from–to (pc)</th>
          </tr>
        </thead>
        <tbody className="num">
          {flagged.slice(0, SHOWN).map((c) => (
            <tr key={c.ipix} className="border-b border-line/60">
              <td className="py-1.5">{c.ipix}</td>
              <td>{c.lonDeg.toFixed(2)}</td>
              <td>{c.latDeg.toFixed(2)}</td>
              <td>{c.nStars}</td>
              <td>{c.nLayers}</td>
              <td>{fmt(c.maxJumpDeg)}</td>
              <td>{fmt(c.maxJumpSignificance)}</td>
              <td>{fmt(c.nearestLayerPc, 0)}–{fmt(c.farthestLayerPc, 0)}</td>
            </tr>
          ))}
        </tbody>
      </table>
      {flagged.length > SHOWN && <p className="mt-2 text-xs text-muted">The first {SHOWN} of {flagged.length}; download the CSV for every one.</p>}
    </div>
  );
}

import type { Resolution } from '../api/resolveMeasurement';
import type { Competing, ReviewRow } from '../types';

/** The other row of a conflict as a person finds it: "batch N, line M" (its uploaded file's line). */
export const competingName = (c: Competing) => (c.line != null ? `batch ${c.batch_id}, line ${c.line}` : `batch ${c.batch_id} (measurement ${c.id})`);

const small = 'rounded border px-1.5 text-[11px] leading-4 transition disabled:opacity-40';

/**
 * What settles a held row: a conflict keeps one of the two values (the other is rejected); an
 * ambiguous match is attached to one of the candidate stars, or made a star of its own.
 */
export function ResolveControls({ row, readOnly, busy, onResolve }: { row: ReviewRow; readOnly: boolean; busy: boolean; onResolve: (row: ReviewRow, r: Resolution) => void }) {
  if (row.state === 'conflict' && row.competing) {
    const c = row.competing;
    const earlier = `${competingName(c)}${c.mjd != null ? ` · MJD ${c.mjd}` : ''} · ${c.state}`;
    return (
      <div className="leading-4">
        <div className="truncate text-[11px] text-warn" title={earlier}>
          vs {earlier}
        </div>
        {!readOnly && (
          <div className="mt-0.5 flex gap-1">
            <button type="button" disabled={busy} className={`${small} border-warn/50 bg-card text-night hover:bg-warn/10`} aria-label={`Keep line ${row.line}'s value`} title="Keep this value; the earlier one is rejected" onClick={(e) => { e.stopPropagation(); onResolve(row, { keep: 'this' }); }}>
              keep this
            </button>
            <button type="button" disabled={busy} className={`${small} border-line bg-card text-night hover:bg-veil-soft`} aria-label={`Keep the earlier value instead of line ${row.line}`} title="Keep the earlier value; this one is rejected" onClick={(e) => { e.stopPropagation(); onResolve(row, { keep: 'other' }); }}>
              keep earlier
            </button>
          </div>
        )}
      </div>
    );
  }
  if (row.state === 'ambiguous' && row.candidates.length > 0) {
    if (readOnly) return <span className="text-[11px] text-muted">a curator chooses the star</span>;
    return (
      <div className="text-[11px] leading-4">
        <button type="button" disabled={busy} className={`${small} border-amber/60 bg-card text-night hover:bg-amber/15`} aria-label={`Make a new star for line ${row.line}`} title="None of these: make a new star at the measured position" onClick={(e) => { e.stopPropagation(); onResolve(row, { newStar: true }); }}>
          new star
        </button>
        {row.candidates.map((c) => (
          <div key={c.id} className="truncate">
            <button type="button" disabled={busy} className="max-w-full truncate text-veil underline-offset-2 hover:underline disabled:opacity-40" aria-label={`Attach line ${row.line} to ${c.name}`} title={`Attach to ${c.name} (${c.separationArcsec.toFixed(2)}″ away)`} onClick={(e) => { e.stopPropagation(); onResolve(row, { starId: c.id }); }}>
              attach to {c.name}
            </button>
          </div>
        ))}
      </div>
    );
  }
  return null;
}

import { formatBytes, formatCount } from '../../../lib/format';
import type { Batch } from '../types';
import { ProgressBar } from '../../../components/ui/ProgressBar';

/** Rows checked of the rows in the file (counted when the check starts), updated while the page polls. */
export function CheckProgress({ batch }: { batch: Batch }) {
  const p = batch.progress;
  const total = p.rowsTotal ?? null;
  const rows = total !== null ? `${formatCount(Math.min(p.rowsDone, total))} of ${formatCount(total)} rows` : `${formatCount(p.rowsDone)} rows`;
  return (
    <div className="space-y-2">
      <ProgressBar
        label="Checking rows on the server"
        done={total !== null ? Math.min(p.rowsDone, total) : p.bytesDone}
        total={total !== null ? total || null : p.bytesTotal || null}
        detail={`${rows} · ${formatBytes(p.bytesDone)} of ${formatBytes(p.bytesTotal)}`}
      />
      <p className="sr-only" data-testid="rows-done">{p.rowsDone}</p>
      <p className="text-xs text-muted">Everyone keeps working meanwhile; the rows appear all at once when the check ends.</p>
      {p.note && <p className="text-xs text-amber-800">{p.note}</p>}
    </div>
  );
}

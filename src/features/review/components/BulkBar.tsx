import { useState } from 'react';
import { Button, Notice } from '../../../components/ui/primitives';
import { ApiError } from '../../../lib/apiClient';
import { formatCount } from '../../../lib/format';
import { useApproveMeasurements } from '../api/approveMeasurements';
import { useRejectMeasurements } from '../api/rejectMeasurements';
import type { ReviewRow } from '../types';

/** Lines of the given measurement ids, as far as they are loaded. */
function linesOf(ids: number[], rows: ReviewRow[]): string {
  const byId = new Map(rows.map((r) => [r.id, r.line]));
  const lines = ids.map((id) => byId.get(id)).filter((l): l is number => l !== undefined).sort((a, b) => a - b);
  const shown = lines.slice(0, 12).join(', ');
  return lines.length > 12 ? `${shown} and ${lines.length - 12} more` : shown;
}

/** Approve or reject the selected measurements, with an optional reason kept in the audit trail. */
export function BulkBar({ batchId, ids, rows, onDone, onClear }: { batchId: number; ids: number[]; rows: ReviewRow[]; onDone: (message: string) => void; onClear: () => void }) {
  const [reason, setReason] = useState('');
  const approve = useApproveMeasurements(batchId);
  const reject = useRejectMeasurements(batchId);
  const busy = approve.isPending || reject.isPending;
  const error = approve.error ?? reject.error;
  const held = error instanceof ApiError && error.status === 409 ? ((error.details as { ids?: number[] } | undefined)?.ids ?? []) : [];
  const run = (which: 'approve' | 'reject') => {
    const m = which === 'approve' ? approve : reject;
    (which === 'approve' ? reject : approve).reset();
    m.mutate(
      { ids, reason: reason.trim() || undefined },
      {
        onSuccess: ({ changed }) => {
          setReason('');
          onDone(`${formatCount(changed)} measurement${changed === 1 ? '' : 's'} ${which === 'approve' ? 'approved' : 'rejected'}${changed < ids.length ? ` (${formatCount(ids.length - changed)} already were)` : ''}.`);
        },
      },
    );
  };
  return (
    <div className="space-y-2 rounded-lg border border-night/20 bg-night/[0.03] px-3 py-2" data-testid="bulk-bar">
      <div className="flex flex-wrap items-center gap-3">
        <span className="num text-sm font-medium text-night">{formatCount(ids.length)} selected</span>
        <input
          aria-label="Reason for the selected rows"
          placeholder="Reason (optional, kept in the history)"
          value={reason}
          onChange={(e) => setReason(e.target.value)}
          className="min-w-[16rem] flex-1 rounded-md border border-line bg-white px-2.5 py-1.5 text-sm outline-none focus:border-veil"
        />
        <Button disabled={busy} onClick={() => run('approve')}>
          Approve selected
        </Button>
        <Button tone="danger" disabled={busy} onClick={() => run('reject')}>
          Reject selected
        </Button>
        <Button tone="quiet" disabled={busy} onClick={onClear}>
          Clear selection
        </Button>
      </div>
      {error && (
        <Notice tone="bad">
          {held.length > 0
            ? `Nothing was approved: ${formatCount(held.length)} of the selected rows are held (conflict or ambiguous) and must be settled first — line${held.length === 1 ? '' : 's'} ${linesOf(held, rows)}. Use “to settle”, or reject them.`
            : error.message}
        </Notice>
      )}
    </div>
  );
}

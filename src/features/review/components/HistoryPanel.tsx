import { useEffect, useRef } from 'react';
import { Notice } from '../../../components/ui/primitives';
import { formatAge } from '../../../lib/format';
import { useMeasurementHistory } from '../api/history';
import { useRevertEdit } from '../api/revertEdit';
import { FIELD_BY_KEY, type FieldKey } from '../fields';
import type { HistoryEntry, ReviewRow } from '../types';

const ACTIONS: Record<string, string> = {
  'measurement.edit': 'changed',
  'measurement.revert': 'undid a change',
  'measurement.approve': 'approved',
  'measurement.reject': 'rejected',
  'measurement.resolve': 'settled a conflict',
  'measurement.attach': 'chose the star',
};

const REVERTIBLE = new Set(['measurement.edit', 'measurement.revert']);

const show = (v: unknown) => (v === null || v === undefined ? '∅' : typeof v === 'object' ? JSON.stringify(v) : String(v));
const label = (k: string) => FIELD_BY_KEY.get(k as FieldKey)?.header ?? k;

/** Every recorded change of one measurement, newest first; a curator may undo an edit. */
export function HistoryPanel({ row, batchId, readOnly, onClose }: { row: ReviewRow; batchId: number; readOnly: boolean; onClose: () => void }) {
  const h = useMeasurementHistory(row.id);
  const revert = useRevertEdit(batchId);
  const closeRef = useRef<HTMLButtonElement>(null);
  useEffect(() => closeRef.current?.focus(), [row.id]);
  const entries = [...(h.data?.history ?? [])].reverse();
  return (
    <aside
      aria-label={`History of line ${row.line}`}
      data-testid="history-panel"
      className="fixed inset-y-0 right-0 z-40 flex w-[26rem] max-w-full flex-col border-l border-line bg-card shadow-[-12px_0_32px_rgba(19,24,58,0.18)]"
      onKeyDown={(e) => e.key === 'Escape' && onClose()}
    >
      <header className="flex items-start justify-between gap-3 border-b border-line bg-paper px-5 py-4">
        <div>
          <h2 className="text-base font-semibold text-night">History · line {row.line}</h2>
          <p className="text-xs text-muted">
            measurement #{row.id} · {row.star_name ?? 'no star yet'} · version {row.version}
          </p>
        </div>
        <button ref={closeRef} type="button" onClick={onClose} className="rounded-md border border-line px-2 py-0.5 text-sm text-muted hover:bg-veil-soft" aria-label="Close the history">
          Close
        </button>
      </header>
      <div className="flex-1 space-y-3 overflow-auto px-5 py-4">
        {h.isPending && <p className="text-sm text-muted">Loading…</p>}
        {h.error && <Notice tone="bad">{h.error.message}</Notice>}
        {revert.error && <Notice tone="bad">The change could not be reverted: {revert.error.message}</Notice>}
        {h.data && entries.length === 0 && <p className="text-sm text-muted">Nothing has changed since the file was checked: these are the values as uploaded.</p>}
        <ol className="space-y-3">
          {entries.map((e) => (
            <Entry key={e.id} e={e} canRevert={!readOnly && REVERTIBLE.has(e.action)} busy={revert.isPending} onRevert={() => revert.mutate({ auditId: e.id, measurementId: row.id })} />
          ))}
        </ol>
      </div>
    </aside>
  );
}

function Entry({ e, canRevert, busy, onRevert }: { e: HistoryEntry; canRevert: boolean; busy: boolean; onRevert: () => void }) {
  // changed fields before and after (the document says only "object or null")
  const before = e.before as Record<string, unknown> | null;
  const after = e.after as Record<string, unknown> | null;
  const keys = [...new Set([...Object.keys(before ?? {}), ...Object.keys(after ?? {})])].filter((k) => k !== 'version');
  return (
    <li className="rounded-lg border border-line p-3 text-sm" data-testid="history-entry" data-action={e.action}>
      <div className="flex items-baseline justify-between gap-2">
        <span>
          <b className="font-medium text-night">{e.actor?.name ?? 'Starveil'}</b> <span className="text-ink">{ACTIONS[e.action] ?? e.action}</span>
        </span>
        <time className="shrink-0 text-xs text-muted" dateTime={e.at} title={new Date(e.at).toLocaleString()}>
          {formatAge(e.at)}
        </time>
      </div>
      {keys.length > 0 && (
        <table className="mt-2 w-full text-xs">
          <tbody>
            {keys.map((k) => (
              <tr key={k}>
                <td className="py-0.5 pr-2 font-mono text-muted">{label(k)}</td>
                <td className="num py-0.5 font-mono text-ink">
                  <span className="text-bad/80 line-through decoration-1">{show(before?.[k])}</span> → <span className="text-ok">{show(after?.[k])}</span>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {before && typeof before.version === 'number' && (
        <div className="mt-1 text-[11px] text-muted">
          version {String(before.version)} → {String(after?.version ?? '')}
        </div>
      )}
      {e.reason && <p className="mt-1.5 text-xs italic text-ink">“{e.reason}”</p>}
      {canRevert && (
        <button type="button" disabled={busy} onClick={onRevert} className="mt-2 rounded-md border border-line px-2.5 py-1 text-xs text-night hover:bg-veil-soft disabled:opacity-50">
          Revert this change
        </button>
      )}
    </li>
  );
}

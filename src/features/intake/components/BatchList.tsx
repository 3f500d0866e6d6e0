import { useState } from 'react';
import { Link } from 'react-router-dom';
import { Button, Notice, Select } from '../../../components/ui/primitives';
import { useBatches } from '../api/batches';
import { formatAge, formatBytes, formatCount } from '../../../lib/format';
import type { BatchState } from '../types';
import { BatchStateBadge, batchStateLabel } from '../../../components/ui/StateBadge';
import { cols, DataTable, TABLE_HEAD_CAPS } from '../../../components/ui/Table';

const PAGE = 25;
const FILTERS: BatchState[] = ['needs_mapping', 'checking', 'awaiting_review', 'failed', 'received'];

/** Batches with their state, counts, sender and age; filter by state, a page at a time. */
export function BatchList({ showUploader }: { showUploader: boolean }) {
  const [state, setState] = useState<BatchState | ''>('');
  const [offset, setOffset] = useState(0);
  const q = useBatches({ state, limit: PAGE, offset });
  const total = q.data?.total ?? 0;

  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center gap-3">
        <label className="flex items-center gap-2 text-sm text-ink">
          State
          <Select
            aria-label="Filter by state"
            value={state}
            onChange={(e) => {
              setState(e.target.value as BatchState | '');
              setOffset(0);
            }}
          >
            <option value="">any</option>
            {FILTERS.map((s) => (
              <option key={s} value={s}>
                {batchStateLabel(s)}
              </option>
            ))}
          </Select>
        </label>
        <span className="text-sm text-muted">{q.data ? `${formatCount(total)} batch${total === 1 ? '' : 'es'}` : ''}</span>
      </div>

      {q.error && <Notice tone="bad">{q.error.message}</Notice>}
      {q.isPending && <p className="text-sm text-muted">Loading…</p>}
      {q.data && q.data.batches.length === 0 && (
        <p className="rounded-lg border border-dashed border-line px-4 py-8 text-center text-sm text-muted">
          No batches{state ? ` in the state “${batchStateLabel(state)}”` : ' yet'}. <Link className="text-veil underline" to="/upload">Upload one</Link>.
        </p>
      )}
      {q.data && q.data.batches.length > 0 && (
        <DataTable
          label="Batches"
          headClassName={TABLE_HEAD_CAPS}
          bodyClassName="num"
          columns={[
            { label: 'File', className: 'py-2 pr-4' },
            { label: 'State', className: 'pr-4' },
            ...cols('pr-3 text-right', 'rows', 'accepted', 'rejected', 'dup.', 'confl.'),
            { label: 'ambig.', className: 'pr-4 text-right' },
            showUploader && { label: 'Sent by', className: 'pr-4' },
            { label: 'Sent' },
          ]}
        >
          {q.data.batches.map((b) => (
            <tr key={b.id} className="border-b border-line/60 hover:bg-veil-soft/40">
              <td className="py-2 pr-4">
                <Link to={`/batches/${b.id}`} className="font-medium text-night underline-offset-2 hover:underline">
                  {b.filename}
                </Link>
                <div className="text-xs text-muted">
                  {b.instrument ?? 'instrument per row'} · {formatBytes(b.sizeBytes)}
                </div>
              </td>
              <td className="pr-4">
                <BatchStateBadge state={b.state} />
              </td>
              <td className="pr-3 text-right">{formatCount(b.counts.rows)}</td>
              <td className="pr-3 text-right text-ok">{formatCount(b.counts.accepted)}</td>
              <td className={`pr-3 text-right ${b.counts.rejected ? 'font-semibold text-bad' : ''}`}>{formatCount(b.counts.rejected)}</td>
              <td className="pr-3 text-right">{formatCount(b.counts.duplicates)}</td>
              <td className={`pr-3 text-right ${b.counts.conflicts ? 'text-warn' : ''}`}>{formatCount(b.counts.conflicts)}</td>
              <td className="pr-4 text-right">{formatCount(b.counts.ambiguous)}</td>
              {showUploader && <td className="pr-4">{b.uploadedBy.name}</td>}
              <td className="whitespace-nowrap text-muted" title={new Date(b.createdAt).toLocaleString()}>
                {formatAge(b.createdAt)}
              </td>
            </tr>
          ))}
        </DataTable>
      )}
      {total > PAGE && (
        <div className="flex items-center gap-3 text-sm">
          <Button tone="quiet" disabled={offset === 0} onClick={() => setOffset(Math.max(0, offset - PAGE))}>
            Newer
          </Button>
          <span className="num text-muted">
            {offset + 1}–{Math.min(offset + PAGE, total)} of {formatCount(total)}
          </span>
          <Button tone="quiet" disabled={offset + PAGE >= total} onClick={() => setOffset(offset + PAGE)}>
            Older
          </Button>
        </div>
      )}
    </div>
  );
}

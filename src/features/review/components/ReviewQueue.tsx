import { useState } from 'react';
import { Link } from 'react-router-dom';
import { Notice } from '../../../components/ui/primitives';
import { formatAge, formatCount } from '../../../lib/format';
import { BatchStateBadge } from '../../../components/ui/StateBadge';
import { useReviewQueue } from '../api/queue';
import type { QueueBatch, QueueSort, QueueState, SortOrder } from '../types';
import { ariaSort, SortHeader } from '../../../components/ui/SortHeader';
import { cols, DataTable, type TableColumn } from '../../../components/ui/Table';

const TABS: { state: QueueState; label: string; empty: string }[] = [
  { state: 'awaiting_review', label: 'Waiting for review', empty: 'Nothing is waiting: every checked batch has been decided.' },
  { state: 'approved', label: 'Approved', empty: 'No batch has been approved yet.' },
  { state: 'returned', label: 'Returned', empty: 'No batch has been returned to its uploader.' },
];

/** First click on a column: the order most useful for it (oldest waiting first; most rows first; A→Z). */
const FIRST_ORDER: Record<QueueSort, SortOrder> = { age: 'asc', rows: 'desc', uploader: 'asc' };

/** Header classes of the plain count columns. */
const COUNT = 'pr-3 text-right font-medium uppercase tracking-wide';

const waited = (hours: number) => (hours < 1 ? `${Math.round(hours * 60)} min` : hours < 48 ? `${hours.toFixed(1)} h` : `${(hours / 24).toFixed(1)} days`);

/** Batches by review state, with their counts, uploader and how long they have waited. */
export function ReviewQueue() {
  const [state, setState] = useState<QueueState>('awaiting_review');
  const [sort, setSort] = useState<QueueSort>('age');
  const [order, setOrder] = useState<SortOrder>('asc');
  const q = useReviewQueue({ state, sort, order });
  const decided = state !== 'awaiting_review';
  const tab = TABS.find((t) => t.state === state)!;

  const sortBy = (s: QueueSort) => {
    if (s === sort) setOrder(order === 'asc' ? 'desc' : 'asc');
    else {
      setSort(s);
      setOrder(FIRST_ORDER[s]);
    }
  };
  const header = (s: QueueSort, label: string, title: string, className: string, align: 'left' | 'right' = 'left'): TableColumn => ({
    label: <SortHeader label={label} title={title} active={sort === s} order={order} onSort={() => sortBy(s)} align={align} />,
    className,
    ariaSort: ariaSort(sort === s, order),
  });

  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <div role="tablist" aria-label="Batches by review state" className="inline-flex rounded-lg border border-line bg-paper p-1">
          {TABS.map((t) => (
            <button
              key={t.state}
              role="tab"
              aria-selected={t.state === state}
              onClick={() => setState(t.state)}
              className={`rounded-md px-3.5 py-1.5 text-sm transition ${t.state === state ? 'bg-card font-medium text-night shadow-sm ring-1 ring-line' : 'text-muted hover:text-night'}`}
            >
              {t.label}
              {t.state === state && q.data && <span className="num ml-2 rounded-full bg-night px-1.5 text-xs text-amber">{q.data.batches.length}</span>}
            </button>
          ))}
        </div>
        <p className="text-xs text-muted">
          Sorted by {sort === 'age' ? (order === 'asc' ? 'time sent, oldest first' : 'time sent, newest first') : sort === 'rows' ? `rows, ${order === 'desc' ? 'most' : 'fewest'} first` : `uploader, ${order === 'asc' ? 'A→Z' : 'Z→A'}`}
          {q.isFetching && !q.isPending ? ' · refreshing…' : ''}
        </p>
      </div>

      {q.error && <Notice tone="bad">{q.error.message}</Notice>}
      {q.isPending && <p className="text-sm text-muted">Loading…</p>}
      {q.data && q.data.batches.length === 0 && <p className="rounded-lg border border-dashed border-line px-4 py-10 text-center text-sm text-muted">{tab.empty}</p>}
      {q.data && q.data.batches.length > 0 && (
        <DataTable
          label="Review queue"
          bodyClassName="num"
          columns={[
            { label: 'Batch', className: 'py-2 pr-4 font-medium uppercase tracking-wide' },
            header('rows', 'rows', 'Sort by the number of rows', 'pr-3 text-right font-medium', 'right'),
            ...cols(COUNT, 'accepted', 'rejected'),
            { label: 'conflicts', className: COUNT, title: 'rows that disagree with an earlier measurement' },
            { label: 'ambiguous', className: COUNT, title: 'rows that could belong to more than one star' },
            { label: 'warnings', className: 'pr-4 text-right font-medium uppercase tracking-wide', title: 'rows with at least one warning' },
            header('uploader', 'sent by', 'Sort by uploader', 'pr-4 font-medium'),
            header('age', decided ? 'sent' : 'waiting', 'Sort by when the batch was sent', 'pr-4 font-medium'),
            decided && { label: 'decision', className: 'font-medium uppercase tracking-wide' },
          ]}
        >
          {q.data.batches.map((b) => (
            <QueueRow key={b.id} b={b} decided={decided} />
          ))}
        </DataTable>
      )}
    </div>
  );
}

function QueueRow({ b, decided }: { b: QueueBatch; decided: boolean }) {
  const c = b.counts;
  const n = (v: number | undefined, tone = '') => <span className={v ? tone : 'text-muted'}>{formatCount(v ?? null)}</span>;
  return (
    <tr className="border-b border-line/60 align-top hover:bg-veil-soft/40" data-batch-id={b.id}>
      <td className="py-2.5 pr-4">
        <Link to={`/review/batches/${b.id}`} className="font-medium text-night underline-offset-2 hover:underline">
          {b.filename}
        </Link>
        <div className="mt-0.5 flex items-center gap-2 text-xs text-muted">
          <span>#{b.id}</span>
          <span>{b.instrument ?? 'instrument per row'}</span>
          {decided && <BatchStateBadge state={b.state} />}
        </div>
      </td>
      <td className="pr-3 text-right font-semibold text-night">{formatCount(c?.rows ?? null)}</td>
      <td className="pr-3 text-right">{n(c?.accepted, 'text-ok')}</td>
      <td className="pr-3 text-right">{n(c?.rejected, 'font-semibold text-bad')}</td>
      <td className="pr-3 text-right">{n(c?.conflicts, 'font-semibold text-warn')}</td>
      <td className="pr-3 text-right">{n(c?.ambiguous, 'font-semibold text-night')}</td>
      <td className="pr-4 text-right">{n(c?.warnings, 'text-amber-deep')}</td>
      <td className="pr-4">
        <div className="text-ink">{b.uploadedBy.name}</div>
        <div className="text-xs text-muted">{b.uploadedBy.email}</div>
      </td>
      <td className="whitespace-nowrap pr-4" title={new Date(b.createdAt).toLocaleString()}>
        {decided ? formatAge(b.createdAt) : <span className={b.ageHours > 72 ? 'font-semibold text-warn' : 'text-ink'}>{waited(b.ageHours)}</span>}
      </td>
      {decided && (
        <td className="max-w-xs text-xs">
          <div className="text-muted">{b.reviewedAt ? `decided ${formatAge(b.reviewedAt)}` : '—'}</div>
          {b.reviewNote && <div className="mt-0.5 line-clamp-2 text-ink" title={b.reviewNote}>“{b.reviewNote}”</div>}
        </td>
      )}
    </tr>
  );
}

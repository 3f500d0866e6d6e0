import { createColumnHelper, flexRender, getCoreRowModel, useReactTable } from '@tanstack/react-table';
import { useVirtualizer } from '@tanstack/react-virtual';
import { useEffect, useMemo, useRef, useState } from 'react';
import { Notice } from '../../../components/ui/primitives';
import { useBatchRows } from '../api/batchRows';
import { fixed, formatCount } from '../../../lib/format';
import type { BatchCounts, BatchRow, RowState } from '../types';
import { RowStateBadge } from '../../../components/ui/StateBadge';

const TABS: { state: RowState | undefined; label: string; count: (c: BatchCounts) => number }[] = [
  { state: undefined, label: 'All rows', count: (c) => c.rows },
  { state: 'accepted', label: 'Accepted', count: (c) => c.accepted },
  { state: 'rejected', label: 'Rejected', count: (c) => c.rejected },
  { state: 'duplicate', label: 'Duplicates', count: (c) => c.duplicates },
  { state: 'conflict', label: 'Conflicts', count: (c) => c.conflicts },
  { state: 'ambiguous', label: 'Ambiguous', count: (c) => c.ambiguous },
];

const MATCH: Record<string, string> = { source_id: 'matched by source_id', position: 'matched by position', new: 'new star' };

const col = createColumnHelper<BatchRow>();


const COLUMNS = [
  col.accessor('line', { header: 'line', size: 52, cell: (c) => <span className="num font-mono">{c.getValue()}</span> }),
  col.accessor('state', {
    header: 'state',
    size: 96,
    cell: (c) => (
      <div>
        <RowStateBadge state={c.getValue()} />
        {c.row.original.derived?.band && <div className="mt-0.5 text-xs text-muted">{c.row.original.derived.band} band</div>}
      </div>
    ),
  }),
  col.display({ id: 'star', header: 'star', size: 190, cell: (c) => <StarCell row={c.row.original} /> }),
  col.display({ id: 'errors', header: 'problems', size: 220, cell: (c) => <ErrorsCell row={c.row.original} /> }),
  col.display({ id: 'warnings', header: 'warnings', size: 170, cell: (c) => <WarningsCell row={c.row.original} /> }),
  col.display({
    id: 'p',
    header: 'p [fraction]',
    size: 88,
    cell: (c) => {
      const d = c.row.original.derived;
      return d ? <ValueWithError value={fixed(d.p, 4)} error={`± ${fixed(d.p_err, 4)}`} /> : <Dash />;
    },
  }),
  col.display({
    id: 'theta',
    header: 'θ [deg]',
    size: 76,
    cell: (c) => {
      const d = c.row.original.derived;
      return d ? <ValueWithError value={fixed(d.theta_deg, 1)} error={`± ${fixed(d.theta_err_deg, 1)}`} /> : <Dash />;
    },
  }),
  col.display({
    id: 'distance',
    header: 'distance [pc]',
    size: 108,
    cell: (c) => {
      const d = c.row.original.derived;
      if (!d || d.distance_pc == null) return <Dash />;
      return (
        <ValueWithError
          value={fixed(d.distance_pc, 0)}
          error={d.distance_lo_pc != null && d.distance_hi_pc != null ? `${fixed(d.distance_lo_pc, 0)}–${fixed(d.distance_hi_pc, 0)}` : ''}
        />
      );
    },
  }),
  col.display({
    id: 'method',
    header: 'method',
    size: 110,
    cell: (c) => {
      const m = c.row.original.derived?.distance_method;
      return m ? <span className="text-xs" title={m}>{m.replace(/_/g, ' ')}</span> : <Dash />;
    },
  }),
];

const GRID = COLUMNS.map((c) => (c.id === 'errors' ? `minmax(${c.size}px, 1.4fr)` : c.id === 'warnings' ? `minmax(${c.size}px, 1fr)` : `${c.size}px`)).join(' ');

/** A value with its uncertainty (or range) on the line below. */
function ValueWithError({ value, error }: { value: string; error: string }) {
  return (
    <div className="num font-mono text-xs leading-5">
      <div className="text-ink">{value}</div>
      {error && <div className="text-muted">{error}</div>}
    </div>
  );
}

function Dash() {
  return <span className="text-muted">—</span>;
}

function StarCell({ row }: { row: BatchRow }) {
  if (row.star) {
    return (
      <div className="min-w-0">
        <div className="truncate font-medium text-night" title={row.star.name ?? undefined}>
          {row.star.name}
        </div>
        <div className="text-xs text-muted">{row.star.match ? MATCH[row.star.match] ?? row.star.match : ''}</div>
        {row.star.sourceId && <div className="truncate font-mono text-[11px] text-muted">{row.star.sourceId}</div>}
      </div>
    );
  }
  if (row.candidates.length > 0) {
    return (
      <div className="text-xs text-night">
        {row.candidates.length} stars within reach:
        {row.candidates.slice(0, 3).map((c) => (
          <div key={c.id} className="truncate text-muted">
            {c.name} <span className="num">({c.separationArcsec.toFixed(1)}″)</span>
          </div>
        ))}
      </div>
    );
  }
  return <Dash />;
}

/** Each problem as "header: message", with the Starveil column when the file calls it otherwise. */
function ErrorsCell({ row }: { row: BatchRow }) {
  if (row.errors.length === 0) return <Dash />;
  return (
    <ul className="space-y-0.5 text-xs">
      {row.errors.map((e, i) => (
        <li key={i} className="text-bad">
          <b className="font-mono">{e.column}</b>
          {e.field && e.field !== e.column && <span className="font-mono text-muted"> ({e.field})</span>}: {e.message}
          {e.value !== undefined && e.value !== null && !e.message.includes(String(e.value)) && (
            <span className="text-ink"> (found “{String(e.value)}”)</span>
          )}
        </li>
      ))}
    </ul>
  );
}

function WarningsCell({ row }: { row: BatchRow }) {
  if (row.warnings.length === 0) return <Dash />;
  return (
    <ul className="space-y-0.5 text-xs text-warn">
      {row.warnings.map((w, i) => (
        <li key={i}>
          <b className="font-mono">{w.column}</b>
          {w.field && w.field !== w.column && <span className="font-mono text-muted"> ({w.field})</span>}: {w.message}
        </li>
      ))}
    </ul>
  );
}

/** The checked rows of a batch, filtered by state, virtualised so tens of thousands scroll smoothly. */
export function BatchRowsTable({ batchId, counts }: { batchId: number; counts: BatchCounts }) {
  const [state, setState] = useState<RowState | undefined>(counts.rejected > 0 ? 'rejected' : undefined);
  const [selected, setSelected] = useState<BatchRow | null>(null);
  const q = useBatchRows(batchId, state, true);
  const data = useMemo(() => q.data?.pages.flatMap((p) => p.rows) ?? [], [q.data]);
  const total = q.data?.pages[0]?.total ?? 0;

  const table = useReactTable({ data, columns: COLUMNS, getCoreRowModel: getCoreRowModel(), getRowId: (r) => String(r.line) });
  const rows = table.getRowModel().rows;

  const scroller = useRef<HTMLDivElement>(null);
  const virtualizer = useVirtualizer({
    count: rows.length,
    getScrollElement: () => scroller.current,
    estimateSize: () => 52,
    overscan: 12,
  });
  const items = virtualizer.getVirtualItems();

  // Ask for the next page when the last loaded rows come into view.
  const lastIndex = items.length ? items[items.length - 1].index : -1;
  useEffect(() => {
    if (lastIndex >= rows.length - 40 && q.hasNextPage && !q.isFetchingNextPage) void q.fetchNextPage();
  }, [lastIndex, rows.length, q]);

  useEffect(() => {
    setSelected(null);
    scroller.current?.scrollTo({ top: 0 });
  }, [state]);

  return (
    <div className="space-y-3">
      <div role="tablist" aria-label="Rows by state" className="flex flex-wrap gap-1.5">
        {TABS.map((t) => {
          const active = t.state === state;
          return (
            <button
              key={t.label}
              role="tab"
              aria-selected={active}
              onClick={() => setState(t.state)}
              className={`rounded-full px-3 py-1 text-sm transition ${active ? 'bg-night text-white' : 'border border-line bg-card text-ink hover:bg-veil-soft'}`}
            >
              {t.label} <span className={`num ml-1 text-xs ${active ? 'text-amber' : 'text-muted'}`}>{formatCount(t.count(counts))}</span>
            </button>
          );
        })}
      </div>

      {q.error && <Notice tone="bad">{q.error.message}</Notice>}

      <div ref={scroller} className="max-h-[30rem] overflow-auto rounded-xl border border-line bg-card" data-testid="rows-scroller">
        <div role="table" aria-label="Checked rows" aria-rowcount={total} className="min-w-max">
          <div role="rowgroup" className="sticky top-0 z-10 border-b border-line bg-paper">
            {table.getHeaderGroups().map((hg) => (
              <div role="row" key={hg.id} className="grid" style={{ gridTemplateColumns: GRID }}>
                {hg.headers.map((h) => (
                  <div role="columnheader" key={h.id} className="px-2.5 py-2 text-xs font-semibold text-muted">
                    {flexRender(h.column.columnDef.header, h.getContext())}
                  </div>
                ))}
              </div>
            ))}
          </div>
          <div role="rowgroup" className="relative" style={{ height: virtualizer.getTotalSize() }}>
            {items.map((vi) => {
              const row = rows[vi.index];
              const isSel = selected?.line === row.original.line;
              return (
                <div
                  role="row"
                  key={row.id}
                  data-index={vi.index}
                  data-line={row.original.line}
                  ref={virtualizer.measureElement}
                  onClick={() => setSelected(isSel ? null : row.original)}
                  className={`absolute left-0 grid w-full cursor-pointer border-b border-line/60 text-sm ${isSel ? 'bg-amber/15' : vi.index % 2 ? 'bg-paper/40' : ''} hover:bg-veil-soft/60`}
                  style={{ gridTemplateColumns: GRID, transform: `translateY(${vi.start}px)` }}
                >
                  {row.getVisibleCells().map((cell) => (
                    <div role="cell" key={cell.id} className="min-w-0 px-2.5 py-2">
                      {flexRender(cell.column.columnDef.cell, cell.getContext())}
                    </div>
                  ))}
                </div>
              );
            })}
          </div>
          {!q.isPending && rows.length === 0 && <div className="px-4 py-8 text-center text-sm text-muted">No rows in this state.</div>}
          {q.isPending && <div className="px-4 py-8 text-center text-sm text-muted">Loading rows…</div>}
        </div>
      </div>
      <div className="flex justify-between text-xs text-muted">
        <span>
          {formatCount(rows.length)} of {formatCount(total)} rows loaded{q.isFetchingNextPage ? ' · loading more…' : ''}
        </span>
        <span>Click a row to see it as it was in the file.</span>
      </div>

      {selected && <RowDetail row={selected} onClose={() => setSelected(null)} />}
    </div>
  );
}

function RowDetail({ row, onClose }: { row: BatchRow; onClose: () => void }) {
  return (
    <div className="rounded-xl border border-line bg-card p-4" data-testid="row-detail">
      <div className="mb-3 flex items-center justify-between">
        <h3 className="text-sm font-semibold text-night">
          Line {row.line} as received <RowStateBadge state={row.state} />
        </h3>
        <button className="text-xs text-veil underline" onClick={onClose}>
          Close
        </button>
      </div>
      <dl className="grid grid-cols-2 gap-x-6 gap-y-1 text-xs md:grid-cols-4">
        {Object.entries(row.values).map(([k, v]) => {
          const bad = row.errors.some((e) => e.column === k);
          return (
            <div key={k} className="flex gap-2">
              <dt className="font-mono text-muted">{k}</dt>
              <dd className={`num font-mono ${bad ? 'font-semibold text-bad' : 'text-ink'}`}>{v === '' ? '∅' : v}</dd>
            </div>
          );
        })}
      </dl>
      {row.derived && (
        <p className="mt-3 text-xs text-muted">
          Derived: q {fixed(row.derived.q, 5)} ± {fixed(row.derived.q_err, 5)}, u {fixed(row.derived.u, 5)} ± {fixed(row.derived.u_err, 5)} (equatorial);
          p debiased {fixed(row.derived.p_debiased, 4)}; θ Galactic {fixed(row.derived.theta_gal_deg, 1)}°; l {fixed(row.derived.glon_deg, 3)}°, b{' '}
          {fixed(row.derived.glat_deg, 3)}°{row.derived.mjd != null ? `; MJD ${fixed(row.derived.mjd, 4)}` : ''}.
        </p>
      )}
    </div>
  );
}

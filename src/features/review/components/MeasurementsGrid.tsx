import { getCoreRowModel, useReactTable, type SortingState, type VisibilityState } from '@tanstack/react-table';
import { useVirtualizer } from '@tanstack/react-virtual';
import { useCallback, useEffect, useMemo, useRef, useState, type KeyboardEvent } from 'react';
import { Notice } from '../../../components/ui/primitives';
import { formatCount } from '../../../lib/format';
import { useBatchMeasurements } from '../api/measurements';
import { useResolveMeasurement, type Resolution } from '../api/resolveMeasurement';
import type { MeasurementFilters, MeasurementListParams, MeasurementState, ReviewRow } from '../types';
import { BulkBar } from './BulkBar';
import { buildColumns, COLUMN_INFO, COLUMN_TITLES, frozenOffsets, HISTORY_COLUMN, INITIAL_VISIBILITY, RESOLVE_COLUMN, SELECT_COLUMN } from './gridColumns';
import { ColumnsMenu, GridFilters } from './GridToolbar';
import { HistoryPanel } from './HistoryPanel';
import { ResolveControls } from './ResolveControls';
import { GridHeader } from './grid/GridHeader';
import { GridRow, type RowHandlers } from './grid/GridRow';
import { cellId, estimateRow, HEADER_H, ROW_H, type Cell } from './grid/layout';
import { problemKey } from './grid/problems';
import { UnsavedEdits } from './grid/UnsavedEdits';
import { useCellEdits } from './grid/useCellEdits';
import { useGridNavigation } from './grid/useGridNavigation';
import { useRowSelection } from './grid/useRowSelection';
import { useDebounced } from '../../../lib/useDebounced';

/**
 * Every measurement of a batch as a spreadsheet: pages of rows fetched as it scrolls, only the
 * rows in view in the document, server-side sort and filters, keyboard editing for curators.
 * The parts: grid/useGridNavigation (active cell, movement keys), grid/useCellEdits (editor,
 * saves, refusals), grid/useRowSelection (ticks), grid/GridHeader, grid/GridRow (cells, editor,
 * refusal popover), grid/UnsavedEdits.
 */
export function MeasurementsGrid({ batchId, readOnly, totals }: { batchId: number; readOnly: boolean; totals?: Record<MeasurementState, number> }) {
  const [sorting, setSorting] = useState<SortingState>([]);
  const [filters, setFilters] = useState<MeasurementFilters>({});
  const search = useDebounced(filters.search ?? '', 300);
  const params: MeasurementListParams = useMemo(() => {
    const s = sorting[0];
    return {
      sort: (s ? COLUMN_INFO[s.id]?.sort : undefined) ?? 'line',
      order: s?.desc ? 'desc' : 'asc',
      state: filters.state,
      band: filters.band,
      instrument: filters.instrument,
      distance_method: filters.distance_method,
      flag: filters.flag,
      search: search || undefined,
    };
  }, [sorting, filters.state, filters.band, filters.instrument, filters.distance_method, filters.flag, search]);

  const q = useBatchMeasurements(batchId, params);
  const data = useMemo(() => q.data?.pages.flatMap((p) => p.rows) ?? [], [q.data]);
  const total = q.data?.pages[0]?.total ?? 0;

  const selection = useRowSelection(data);
  const { rowSelection, setRowSelection, onCheck, selectAllRef } = selection;
  const [columnVisibility, setColumnVisibility] = useState<VisibilityState>(INITIAL_VISIBILITY);
  const [historyId, setHistoryId] = useState<number | null>(null);
  const [resolveError, setResolveError] = useState<string | null>(null);
  const [bulkMessage, setBulkMessage] = useState<string | null>(null);
  const scroller = useRef<HTMLDivElement>(null);

  const resolve = useResolveMeasurement(batchId);
  const resolveMutate = resolve.mutate;
  const onResolve = useCallback(
    (row: ReviewRow, resolution: Resolution) => {
      setResolveError(null);
      resolveMutate({ id: row.id, resolution }, { onError: (e) => setResolveError(`Line ${row.line} could not be settled: ${e.message}`) });
    },
    [resolveMutate],
  );

  const columns = useMemo(
    () =>
      buildColumns({
        selectable: !readOnly,
        resolve: (row) => <ResolveControls row={row} readOnly={readOnly} busy={resolve.isPending} onResolve={onResolve} />,
        history: (row) => (
          <button
            type="button"
            tabIndex={-1}
            className="rounded px-1.5 text-xs text-veil underline-offset-2 hover:bg-veil-soft hover:underline"
            aria-label={`History of line ${row.line}`}
            onClick={(e) => {
              e.stopPropagation();
              setHistoryId(row.id);
            }}
          >
            history
          </button>
        ),
        onCheck,
        selectAll: () => selectAllRef.current,
      }).map((c) => ({ ...c, enableSorting: !!COLUMN_INFO[c.id!]?.sort })),
    [readOnly, resolve.isPending, onResolve, onCheck, selectAllRef], // selectAllRef: the same ref object on every render
  );
  const count = Math.max(total, data.length);
  // stable between renders: the virtualiser recomputes every row's offset when these change
  const estimateSize = useCallback((i: number) => estimateRow(data[i]), [data]);
  const getItemKey = useCallback((i: number) => data[i]?.id ?? `slot-${i}`, [data]);
  const getScrollElement = useCallback(() => scroller.current, []);
  const virtualizer = useVirtualizer({
    count,
    getScrollElement,
    estimateSize,
    getItemKey,
    overscan: 8,
    scrollMargin: HEADER_H,
    scrollPaddingStart: HEADER_H,
  });
  const items = virtualizer.getVirtualItems();

  // TanStack Table sees only the rows in view: with 100,000 rows loaded, building a row model of
  // all of them on every page would cost more than drawing the few dozen on screen.
  const first = items.length ? items[0].index : 0;
  const last = items.length ? items[items.length - 1].index : -1;
  const windowRows = useMemo(() => data.slice(first, last + 1), [data, first, last]);
  const table = useReactTable({
    data: windowRows,
    columns,
    getCoreRowModel: getCoreRowModel(),
    getRowId: (r) => String(r.id),
    manualSorting: true,
    sortDescFirst: false,
    enableRowSelection: !readOnly,
    columnResizeMode: 'onChange',
    state: { sorting, rowSelection, columnVisibility },
    onSortingChange: setSorting,
    onRowSelectionChange: setRowSelection,
    onColumnVisibilityChange: setColumnVisibility,
  });
  const tableRows = table.getRowModel().rowsById;

  const visibleColumns = table.getVisibleLeafColumns();
  const navigable = useMemo(() => visibleColumns.filter((c) => COLUMN_INFO[c.id]?.navigable).map((c) => c.id), [visibleColumns]);
  const template = visibleColumns.map((c) => `${c.getSize()}px`).join(' ');
  const width = table.getTotalSize();
  // line, state and star stay in place while scrolling sideways (sticky cells with an opaque ground)
  const frozen = useMemo(() => frozenOffsets(visibleColumns.map((c) => ({ id: c.id, size: c.getSize() }))), [visibleColumns, template]); // eslint-disable-line react-hooks/exhaustive-deps -- template: a column was resized (visibleColumns keeps its identity)

  // Ask for the next page as the rows in view reach the end of what is loaded.
  const lastIndex = items.length ? items[items.length - 1].index : -1;
  useEffect(() => {
    if (lastIndex >= data.length - 40 && q.hasNextPage && !q.isFetching) void q.fetchNextPage();
  }, [lastIndex, data.length, q.hasNextPage, q.isFetching, q]);

  // "to settle" only earns its width when the batch holds conflicts or ambiguous matches.
  const heldKnown = totals ? totals.conflict + totals.ambiguous : null;
  useEffect(() => {
    if (heldKnown === 0) setColumnVisibility((v) => (RESOLVE_COLUMN in v ? v : { ...v, [RESOLVE_COLUMN]: false }));
  }, [heldKnown]);

  const focusGrid = () => scroller.current?.focus({ preventScroll: true });
  const { active, setActive, move, onNavigationKey } = useGridNavigation({ navigable, count, batchId, virtualizer, scroller });
  const edits = useCellEdits({ batchId, data, readOnly, move, setActive, focusGrid });
  const { editing, editingRef, problems, latestProblem, saving, hint, canEdit, startEdit, dropProblem } = edits;

  // A new sort or filter starts from the top with nothing selected.
  const { clearSelection } = selection;
  useEffect(() => {
    clearSelection();
    setActive((a) => ({ row: 0, col: a.col }));
    scroller.current?.scrollTo({ top: 0 });
  }, [params, clearSelection, setActive]);

  const onGridKey = (e: KeyboardEvent<HTMLDivElement>) => {
    if (e.target !== e.currentTarget) return; // the editor and the buttons in cells handle their own keys
    if (onNavigationKey(e)) return;
    const jump = e.ctrlKey || e.metaKey;
    const row = data[active.row];
    switch (e.key) {
      case 'Enter':
      case 'F2':
        e.preventDefault();
        if (!startEdit(active) && row && active.col === HISTORY_COLUMN) setHistoryId(row.id);
        return;
      case 'Escape':
        if (row) dropProblem(problemKey(row.id, active.col));
        return;
      case ' ':
        if (readOnly || !row) return;
        e.preventDefault();
        return selection.toggleRow(row);
    }
    // any other character starts editing with it, as in a spreadsheet
    if (e.key.length === 1 && !jump && !e.altKey && canEdit(active)) {
      e.preventDefault();
      startEdit(active, e.key);
    }
  };

  const onCellClick = (cell: Cell) => {
    if (!COLUMN_INFO[cell.col]?.navigable) return;
    if (editingRef.current && (editingRef.current.row !== cell.row || editingRef.current.col !== cell.col)) return; // the editor's blur saves first
    setActive(cell);
    if (!startEdit(cell)) focusGrid();
  };

  // the rows are memoised; they reach the grid's current handlers through this ref
  const handlers = useRef<RowHandlers>(null!);
  handlers.current = { onCellClick, commit: edits.commit, cancelEdit: edits.cancelEdit, dropProblem, reloadRow: edits.reloadRow };

  const historyRow = historyId !== null ? data.find((r) => r.id === historyId) ?? null : null;
  const selectedIds = Object.keys(rowSelection).map(Number);
  const problemList = Object.entries(problems);
  const activeRow = data[active.row];
  const sortedBy = sorting[0];

  return (
    <div className="space-y-3">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <GridFilters filters={filters} onChange={setFilters} totals={totals} />
        <ColumnsMenu
          columns={table.getAllLeafColumns().filter((c) => c.id !== SELECT_COLUMN)}
          onReset={() => {
            setColumnVisibility(INITIAL_VISIBILITY);
            table.resetColumnSizing();
          }}
        />
      </div>

      {!readOnly && selectedIds.length > 0 && (
        <BulkBar
          batchId={batchId}
          ids={selectedIds}
          rows={data}
          onClear={() => setRowSelection({})}
          onDone={(message) => {
            setRowSelection({});
            setBulkMessage(message);
          }}
        />
      )}
      {bulkMessage && selectedIds.length === 0 && (
        <Notice tone="ok">
          {bulkMessage}{' '}
          <button type="button" className="underline" onClick={() => setBulkMessage(null)}>
            dismiss
          </button>
        </Notice>
      )}
      {q.error && <Notice tone="bad">The measurements could not be loaded: {q.error.message}</Notice>}
      {resolveError && <Notice tone="bad">{resolveError}</Notice>}

      <div
        ref={scroller}
        role="grid"
        tabIndex={0}
        aria-label={`Measurements of batch ${batchId}`}
        aria-rowcount={count + 1}
        aria-colcount={visibleColumns.length}
        aria-readonly={readOnly || undefined}
        aria-multiselectable={!readOnly || undefined}
        aria-activedescendant={data[active.row] ? cellId(batchId, active.row, active.col) : undefined}
        onKeyDown={onGridKey}
        data-testid="review-grid"
        className="relative h-[calc(100vh-21rem)] min-h-[24rem] overflow-auto rounded-xl border border-line bg-card outline-none focus-visible:ring-2 focus-visible:ring-veil/50"
      >
        <div style={{ width }} className="min-w-full">
          <GridHeader table={table} filters={filters} readOnly={readOnly} frozen={frozen} template={template} />

          <div role="rowgroup" className="relative" style={{ height: virtualizer.getTotalSize() }}>
            {items.map((vi) => {
              const loaded = data[vi.index];
              const row = loaded ? tableRows[String(loaded.id)] : undefined;
              const top = vi.start - HEADER_H;
              if (!row) {
                return (
                  <div role="row" key={vi.key} data-index={vi.index} aria-rowindex={vi.index + 2} className="absolute left-0 flex w-full items-center border-b border-line/50 px-3 text-xs text-muted" style={{ transform: `translateY(${top}px)`, height: ROW_H }}>
                    <span role="gridcell" className="animate-pulse">loading row {formatCount(vi.index + 1)}…</span>
                  </div>
                );
              }
              const isActiveRow = vi.index === active.row;
              return (
                <GridRow
                  key={row.id}
                  index={vi.index}
                  top={top}
                  m={row.original}
                  tableRow={row}
                  selected={row.getIsSelected()}
                  activeCol={isActiveRow ? active.col : null}
                  editing={editing && editing.row === vi.index ? editing : null}
                  anyEditing={!!editing}
                  frozen={frozen}
                  problems={problems}
                  latestProblem={latestProblem}
                  saving={saving}
                  template={template}
                  width={width}
                  columns={columns}
                  readOnly={readOnly}
                  batchId={batchId}
                  measure={virtualizer.measureElement}
                  nearEnd={vi.index >= count - 3}
                  handlers={handlers}
                />
              );
            })}
          </div>
          {!q.isPending && count === 0 && <div className="px-4 py-10 text-center text-sm text-muted">No measurement matches these filters.</div>}
          {q.isPending && <div className="px-4 py-10 text-center text-sm text-muted">Loading measurements…</div>}
        </div>
      </div>

      <div className="flex flex-wrap items-baseline justify-between gap-2 text-xs text-muted">
        <span data-testid="grid-status">
          {formatCount(data.length)} of {formatCount(total)} measurements loaded{q.isFetchingNextPage ? ' · loading more…' : ''}
          {sortedBy ? ` · sorted by ${COLUMN_TITLES[sortedBy.id] ?? sortedBy.id} ${sortedBy.desc ? '(descending)' : '(ascending)'}` : ' · in file order'}
          {activeRow ? ` · line ${activeRow.line}, ${COLUMN_TITLES[active.col] ?? active.col}` : ''}
          {hint && hint.row === active.row && hint.col === active.col && (
            <span className="text-amber-deep" data-testid="grid-hint">
              {' '}
              · {hint.text}
            </span>
          )}
        </span>
        <span>
          {readOnly
            ? 'Read only. Arrow keys move; Enter on “history” opens a row’s changes.'
            : 'Click a cell or press Enter to edit · Enter or Tab saves and moves · Esc cancels · arrows move · Space or shift-click selects'}
        </span>
      </div>

      <UnsavedEdits problems={problemList} onDismiss={dropProblem} />

      {historyRow && (
        <HistoryPanel
          row={historyRow}
          batchId={batchId}
          readOnly={readOnly}
          onClose={() => {
            setHistoryId(null);
            focusGrid();
          }}
        />
      )}
    </div>
  );
}

import { useQueryClient } from '@tanstack/react-query';
import { flexRender, getCoreRowModel, useReactTable, type Row, type RowSelectionState, type SortingState, type VisibilityState } from '@tanstack/react-table';
import { useVirtualizer } from '@tanstack/react-virtual';
import { memo, useCallback, useEffect, useLayoutEffect, useMemo, useRef, useState, type CSSProperties, type KeyboardEvent, type MouseEvent } from 'react';
import { Notice } from '../../../components/ui/primitives';
import { formatCount } from '../../intake/format';
import { patchCachedRow, rowPatchFromStored } from '../api/cache';
import { refusalFor, staleCurrent, useEditMeasurement } from '../api/editMeasurement';
import { useBatchMeasurements } from '../api/measurements';
import { useResolveMeasurement, type Resolution } from '../api/resolveMeasurement';
import { cellNotes, editText, FIELD_BY_KEY, isEditableField, parseEdit, type FieldKey } from '../fields';
import type { MeasurementFilters, MeasurementListParams, MeasurementState, ReviewRow, StoredMeasurement } from '../types';
import { BulkBar } from './BulkBar';
import { buildColumns, COLUMN_INFO, COLUMN_TITLES, formatField, frozenOffsets, HISTORY_COLUMN, INITIAL_VISIBILITY, RESOLVE_COLUMN, SELECT_COLUMN } from './gridColumns';
import { ColumnsMenu, GridFilters } from './GridToolbar';
import { HistoryPanel } from './HistoryPanel';
import { ResolveControls } from './ResolveControls';
import { ariaSort, SortMark } from './SortHeader';

/** Height of the sticky header row, px (the virtualiser keeps rows from hiding under it). */
const HEADER_H = 44;
const ROW_H = 34;

interface Cell {
  row: number;
  col: string;
}

/** An edit the server did not take, shown on its cell until dismissed or edited again. */
type Problem =
  | { kind: 'refused'; line: number; field: FieldKey; typed: string; message: string }
  | { kind: 'stale'; line: number; field: FieldKey; typed: string; current: StoredMeasurement };

const problemKey = (id: number, field: string) => `${id}:${field}`;

function useDebounced<T>(value: T, ms: number): T {
  const [v, setV] = useState(value);
  useEffect(() => {
    const t = setTimeout(() => setV(value), ms);
    return () => clearTimeout(t);
  }, [value, ms]);
  return v;
}

/** Rough height before a row is measured: held rows carry a second line or their candidates. */
function estimateRow(r: ReviewRow | undefined): number {
  if (!r) return ROW_H;
  if (r.state === 'ambiguous') return Math.max(ROW_H, 22 + 16 * r.candidates.length);
  if (r.competing) return 48;
  return ROW_H;
}

export function problemText(p: Problem): string {
  const where = `Line ${p.line}, ${FIELD_BY_KEY.get(p.field)?.header ?? p.field}`;
  if (p.kind === 'refused') return `${where}: “${p.typed === '' ? '(empty)' : p.typed}” was not saved — ${p.message}.`;
  const now = (p.current as Record<string, unknown>)[p.field];
  return `${where}: “${p.typed}” was not saved — someone else changed this measurement meanwhile (now version ${p.current.version}, ${p.field} = ${now === null || now === undefined ? 'empty' : String(now)}).`;
}

/**
 * Every measurement of a batch as a spreadsheet: pages of rows fetched as it scrolls, only the
 * rows in view in the document, server-side sort and filters, keyboard editing for curators.
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

  const qc = useQueryClient();
  const q = useBatchMeasurements(batchId, params);
  const data = useMemo(() => q.data?.pages.flatMap((p) => p.rows) ?? [], [q.data]);
  const total = q.data?.pages[0]?.total ?? 0;

  const [rowSelection, setRowSelection] = useState<RowSelectionState>({});
  const [columnVisibility, setColumnVisibility] = useState<VisibilityState>(INITIAL_VISIBILITY);
  const [active, setActive] = useState<Cell>({ row: 0, col: 'line' });
  const [editing, setEditing] = useState<(Cell & { text: string; selectAll: boolean }) | null>(null);
  const editingRef = useRef<typeof editing>(null);
  const [problems, setProblems] = useState<Record<string, Problem>>({});
  const [latestProblem, setLatestProblem] = useState<string | null>(null);
  const [saving, setSaving] = useState<Record<string, true>>({});
  const [historyId, setHistoryId] = useState<number | null>(null);
  const [resolveError, setResolveError] = useState<string | null>(null);
  const [bulkMessage, setBulkMessage] = useState<string | null>(null);
  /** why the active cell cannot be edited, shown while it stays active */
  const [hint, setHint] = useState<(Cell & { text: string }) | null>(null);
  const lastChecked = useRef<number | null>(null);
  const scroller = useRef<HTMLDivElement>(null);

  const dropProblem = useCallback((key: string) => {
    setProblems((p) => {
      if (!(key in p)) return p;
      const { [key]: _gone, ...rest } = p;
      return rest;
    });
  }, []);
  const stopSaving = (key: string) =>
    setSaving((s) => {
      const { [key]: _gone, ...rest } = s;
      return rest;
    });

  const edit = useEditMeasurement(batchId, {
    onSaved: (input) => stopSaving(problemKey(input.id, input.field)),
    onFailed: (input, error) => {
      const key = problemKey(input.id, input.field);
      stopSaving(key);
      const current = staleCurrent(error);
      const base = { line: input.line ?? 0, field: input.field as FieldKey, typed: input.typed ?? String(input.value ?? '') };
      setProblems((p) => ({ ...p, [key]: current ? { kind: 'stale', ...base, current } : { kind: 'refused', ...base, message: refusalFor(error, input.field) } }));
      setLatestProblem(key);
    },
  });
  const resolve = useResolveMeasurement(batchId);
  const resolveMutate = resolve.mutate;
  const onResolve = useCallback(
    (row: ReviewRow, resolution: Resolution) => {
      setResolveError(null);
      resolveMutate({ id: row.id, resolution }, { onError: (e) => setResolveError(`Line ${row.line} could not be settled: ${e.message}`) });
    },
    [resolveMutate],
  );

  // the loaded rows and where each sits, read through refs by the checkbox handlers (shift-click ranges)
  const rowsRef = useRef<ReviewRow[]>([]);
  rowsRef.current = data;
  const indexById = useMemo(() => new Map(data.map((r, i) => [r.id, i])), [data]);
  const indexRef = useRef(indexById);
  indexRef.current = indexById;
  const onCheck = useCallback((e: MouseEvent<HTMLInputElement>, row: ReviewRow) => {
    e.stopPropagation();
    const rows = rowsRef.current;
    const index = indexRef.current.get(row.id);
    if (index === undefined) return;
    const id = String(row.id);
    // read everything now: the state updater runs later, after lastChecked has moved on
    const from = e.shiftKey && lastChecked.current !== null ? lastChecked.current : index;
    lastChecked.current = index;
    setRowSelection((sel) => {
      const to = !sel[id];
      const next = { ...sel };
      for (let i = Math.min(from, index); i <= Math.max(from, index); i++) {
        if (!rows[i]) continue;
        if (to) next[String(rows[i].id)] = true;
        else delete next[String(rows[i].id)];
      }
      return next;
    });
  }, []);

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
    [readOnly, resolve.isPending, onResolve, onCheck],
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

  const selectedCount = Object.keys(rowSelection).length;
  const selectAllRef = useRef({ checked: false, indeterminate: false, toggle: () => {} });
  selectAllRef.current = {
    checked: data.length > 0 && selectedCount >= data.length,
    indeterminate: selectedCount > 0 && selectedCount < data.length,
    toggle: () => setRowSelection(selectedCount >= data.length ? {} : Object.fromEntries(data.map((r) => [String(r.id), true]))),
  };

  const visibleColumns = table.getVisibleLeafColumns();
  const navigable = useMemo(() => visibleColumns.filter((c) => COLUMN_INFO[c.id]?.navigable).map((c) => c.id), [visibleColumns]);
  const template = visibleColumns.map((c) => `${c.getSize()}px`).join(' ');
  const width = table.getTotalSize();
  // line, state and star stay in place while scrolling sideways (sticky cells with an opaque ground)
  const frozen = useMemo(() => frozenOffsets(visibleColumns.map((c) => ({ id: c.id, size: c.getSize() }))), [visibleColumns, template]); // eslint-disable-line react-hooks/exhaustive-deps

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

  // A new sort or filter starts from the top with nothing selected.
  useEffect(() => {
    setRowSelection({});
    lastChecked.current = null;
    setActive((a) => ({ row: 0, col: a.col }));
    scroller.current?.scrollTo({ top: 0 });
  }, [params]);

  // Keep the active cell in view (rows through the virtualiser; columns through the browser).
  useEffect(() => {
    virtualizer.scrollToIndex(active.row, { align: 'auto' });
    const id = requestAnimationFrame(() => document.getElementById(cellId(batchId, active.row, active.col))?.scrollIntoView({ block: 'nearest', inline: 'nearest' }));
    return () => cancelAnimationFrame(id);
  }, [active, virtualizer, batchId]);

  const focusGrid = () => scroller.current?.focus({ preventScroll: true });

  const move = useCallback(
    (dRow: number, dCol: number, from?: Cell) => {
      setActive((a0) => {
        const a = from ?? a0;
        const ci = Math.max(0, navigable.indexOf(a.col));
        const col = navigable[Math.min(navigable.length - 1, Math.max(0, ci + dCol))] ?? a.col;
        const row = Math.min(Math.max(0, count - 1), Math.max(0, a.row + dRow));
        return { row, col };
      });
    },
    [navigable, count],
  );

  const canEdit = (cell: Cell) => !readOnly && isEditableField(cell.col) && !!data[cell.row];

  const startEdit = (cell: Cell, typed?: string) => {
    const spec = FIELD_BY_KEY.get(cell.col as FieldKey);
    setHint(!readOnly && spec && !spec.editable ? { ...cell, text: `${spec.header} is derived from the other values; edit those instead.` } : null);
    if (!canEdit(cell)) return false;
    const row = data[cell.row];
    const next = { ...cell, text: typed ?? editText(row[cell.col as FieldKey]), selectAll: typed === undefined };
    editingRef.current = next;
    setEditing(next);
    setActive(cell);
    return true;
  };

  const cancelEdit = () => {
    editingRef.current = null;
    setEditing(null);
    focusGrid();
  };

  /** Save the editor's text (if it changed), then move the active cell; a blur leaves the focus where the person put it. */
  const commit = (text: string, dRow: number, dCol: number, refocus = true) => {
    const ed = editingRef.current;
    if (!ed) return;
    editingRef.current = null;
    setEditing(null);
    const row = data[ed.row];
    const spec = FIELD_BY_KEY.get(ed.col as FieldKey);
    if (row && spec && isEditableField(spec.key) && text.trim() !== editText(row[spec.key]).trim()) {
      const key = problemKey(row.id, spec.key);
      dropProblem(key);
      setSaving((s) => ({ ...s, [key]: true }));
      edit.mutate({ id: row.id, field: spec.key, value: parseEdit(spec, text), typed: text, line: row.line });
    }
    if (dRow || dCol) move(dRow, dCol, ed);
    if (refocus) focusGrid();
  };

  const onGridKey = (e: KeyboardEvent<HTMLDivElement>) => {
    if (e.target !== e.currentTarget) return; // the editor and the buttons in cells handle their own keys
    const page = Math.max(1, Math.floor((scroller.current?.clientHeight ?? 400) / ROW_H) - 2);
    const jump = e.ctrlKey || e.metaKey;
    const row = data[active.row];
    switch (e.key) {
      case 'ArrowDown':
        e.preventDefault();
        return move(1, 0);
      case 'ArrowUp':
        e.preventDefault();
        return move(-1, 0);
      case 'ArrowRight':
        e.preventDefault();
        return move(0, 1);
      case 'ArrowLeft':
        e.preventDefault();
        return move(0, -1);
      case 'PageDown':
        e.preventDefault();
        return move(page, 0);
      case 'PageUp':
        e.preventDefault();
        return move(-page, 0);
      case 'Home':
        e.preventDefault();
        return setActive(jump ? { row: 0, col: active.col } : { row: active.row, col: navigable[0] });
      case 'End':
        e.preventDefault();
        return setActive(jump ? { row: count - 1, col: active.col } : { row: active.row, col: navigable[navigable.length - 1] });
      case 'Tab': {
        const ci = navigable.indexOf(active.col);
        if ((e.shiftKey && ci <= 0) || (!e.shiftKey && ci >= navigable.length - 1)) return; // let the focus leave the grid
        e.preventDefault();
        return move(0, e.shiftKey ? -1 : 1);
      }
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
        return setRowSelection((sel) => {
          const { [String(row.id)]: was, ...rest } = sel;
          return was ? rest : { ...sel, [String(row.id)]: true };
        });
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

  const reloadRow = (p: Problem, key: string) => {
    if (p.kind !== 'stale') return;
    patchCachedRow(qc, batchId, p.current.id, () => rowPatchFromStored(p.current));
    dropProblem(key);
  };

  // the rows are memoised; they reach the grid's current handlers through this ref
  const handlers = useRef<RowHandlers>(null!);
  handlers.current = { onCellClick, commit, cancelEdit, dropProblem, reloadRow };

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
          <div role="rowgroup" className="sticky top-0 z-20 border-b border-line bg-paper" style={{ height: HEADER_H }}>
            {table.getHeaderGroups().map((hg) => (
              <div role="row" aria-rowindex={1} key={hg.id} className="grid h-full" style={{ gridTemplateColumns: template }}>
                {hg.headers.map((h) => {
                  const info = COLUMN_INFO[h.column.id];
                  const sorted = h.column.getIsSorted();
                  const filtered = (h.column.id === 'state' && filters.state) || (h.column.id === 'band' && filters.band) || (h.column.id === 'instrument' && filters.instrument) || (h.column.id === 'distance_method' && filters.distance_method) || (h.column.id === 'star' && filters.search) || (h.column.id === 'notes' && filters.flag);
                  const title = info?.field ? `${info.field.description}${info.field.editable && !readOnly ? ' — editable' : ''}` : COLUMN_TITLES[h.column.id];
                  return (
                    <div
                      role="columnheader"
                      key={h.id}
                      aria-sort={h.column.getCanSort() ? ariaSort(!!sorted, sorted === 'desc' ? 'desc' : 'asc') : undefined}
                      data-col={h.column.id}
                      data-frozen={h.column.id in frozen.left || undefined}
                      style={h.column.id in frozen.left ? { position: 'sticky', left: frozen.left[h.column.id], zIndex: 2, background: 'var(--color-paper)', boxShadow: frozen.last === h.column.id ? FROZEN_EDGE : undefined } : undefined}
                      className={`relative flex items-center px-2 text-[11px] font-semibold leading-tight text-muted ${info?.align === 'right' ? 'justify-end text-right' : ''}`}
                      title={title}
                    >
                      {h.column.getCanSort() ? (
                        <button type="button" tabIndex={-1} onClick={h.column.getToggleSortingHandler()} className={`group flex items-center gap-1 hover:text-night ${sorted ? 'text-night' : ''} ${info?.align === 'right' ? 'flex-row-reverse text-right' : 'text-left'}`}>
                          <span className="line-clamp-2">{flexRender(h.column.columnDef.header, h.getContext())}</span>
                          <SortMark active={!!sorted} order={sorted === 'desc' ? 'desc' : 'asc'} />
                        </button>
                      ) : (
                        <span className="line-clamp-2">{flexRender(h.column.columnDef.header, h.getContext())}</span>
                      )}
                      {filtered && <span className="ml-1 h-1.5 w-1.5 shrink-0 rounded-full bg-amber" title="filtered" aria-label="filtered" />}
                      {info?.field?.editable && !readOnly && <span className="ml-0.5 text-[9px] text-veil/70" aria-hidden>✎</span>}
                      {h.column.getCanResize() && (
                        <div
                          role="separator"
                          aria-orientation="vertical"
                          aria-label={`Resize ${COLUMN_TITLES[h.column.id] ?? h.column.id}`}
                          data-testid={`resize-${h.column.id}`}
                          onMouseDown={h.getResizeHandler()}
                          onTouchStart={h.getResizeHandler()}
                          onDoubleClick={() => h.column.resetSize()}
                          className={`absolute right-0 top-0 h-full w-1.5 cursor-col-resize select-none touch-none ${h.column.getIsResizing() ? 'bg-veil' : 'hover:bg-veil/40'}`}
                        />
                      )}
                    </div>
                  );
                })}
              </div>
            ))}
          </div>

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

      {problemList.length > 0 && (
        <div role="alert" className="space-y-1 rounded-lg border border-bad/40 bg-bad/5 px-3 py-2 text-sm text-bad" data-testid="unsaved-edits">
          <div className="font-medium">
            {problemList.length} edit{problemList.length === 1 ? '' : 's'} not saved — the server kept its values:
          </div>
          <ul className="list-disc space-y-0.5 pl-5 text-xs">
            {problemList.map(([k, p]) => (
              <li key={k}>
                {problemText(p)}{' '}
                <button type="button" className="underline" onClick={() => dropProblem(k)}>
                  dismiss
                </button>
              </li>
            ))}
          </ul>
        </div>
      )}

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

const cellId = (batchId: number, row: number, col: string) => `b${batchId}-r${row}-${col}`;

interface RowHandlers {
  onCellClick: (cell: Cell) => void;
  commit: (text: string, dRow: number, dCol: number, refocus?: boolean) => void;
  cancelEdit: () => void;
  dropProblem: (key: string) => void;
  reloadRow: (p: Problem, key: string) => void;
}

interface GridRowProps {
  index: number;
  top: number;
  m: ReviewRow;
  /** TanStack's row for the cells; rebuilt whenever the rows in view change, so not compared */
  tableRow: Row<ReviewRow>;
  selected: boolean;
  /** the active column, when the active cell is in this row */
  activeCol: string | null;
  editing: (Cell & { text: string; selectAll: boolean }) | null;
  problems: Record<string, Problem>;
  latestProblem: string | null;
  saving: Record<string, true>;
  template: string;
  width: number;
  /** the column definitions (their identity changes when a cell renderer's inputs do) */
  columns: unknown;
  readOnly: boolean;
  batchId: number;
  measure: (el: Element | null) => void;
  /** among the last rows (kept for the memo comparison; the popover measures its own room) */
  nearEnd: boolean;
  /** some cell is being typed in: refusal popovers step aside (the list below the grid keeps them) */
  anyEditing: boolean;
  /** left offsets of the frozen columns */
  frozen: ReturnType<typeof frozenOffsets>;
  /** not compared: always the grid's current handlers */
  handlers: { current: RowHandlers };
}

/** Re-render a row only when something it shows changed: scrolling then costs only the rows that come into view. */
const sameRow = (a: GridRowProps, b: GridRowProps) =>
  (Object.keys(a) as (keyof GridRowProps)[]).every((k) => k === 'tableRow' || k === 'handlers' || a[k] === b[k]);

/** Opaque grounds for frozen cells (the row's tint composed on white), so scrolled cells never show through. */
function frozenGround(m: ReviewRow, index: number, selected: boolean, active: boolean, problem: boolean): string {
  if (problem) return '#f7ebed';
  if (active) return '#eeeffc';
  if (selected) return '#fef8ec';
  if (m.state === 'conflict') return '#fcfaf6';
  if (m.state === 'ambiguous') return '#fefbf4';
  return index % 2 ? '#fbfaf7' : '#ffffff';
}
const FROZEN_EDGE = '6px 0 6px -4px rgba(19, 24, 58, 0.18)';

const GridRow = memo(function GridRow({ index, top, m, tableRow, selected, activeCol, editing, anyEditing, frozen, problems, latestProblem, saving, template, width, readOnly, batchId, measure, handlers }: GridRowProps) {
  const rowHasPopover = Object.keys(problems).some((k) => k.startsWith(`${m.id}:`) && (k === latestProblem || k === problemKey(m.id, activeCol ?? '')));
  const fixedHeight = estimateRow(m) === ROW_H;
  return (
    <div
      role="row"
      data-index={index}
      data-line={m.line}
      data-id={m.id}
      data-state={m.state}
      // ordinary rows are exactly ROW_H tall; only rows whose content varies are measured (measuring forces a layout)
      ref={fixedHeight ? undefined : measure}
      aria-rowindex={index + 2}
      aria-selected={readOnly ? undefined : selected}
      className={`absolute left-0 grid border-b border-line/50 text-[13px] ${rowHasPopover ? 'z-10' : ''} ${selected ? 'bg-amber/10' : m.state === 'conflict' ? 'bg-warn/[0.04]' : m.state === 'ambiguous' ? 'bg-amber/[0.06]' : index % 2 ? 'bg-paper/50' : 'bg-card'}`}
      style={{ gridTemplateColumns: template, width, transform: `translateY(${top}px)`, height: fixedHeight ? ROW_H : undefined, contain: 'layout style' }}
    >
      {tableRow.getVisibleCells().map((cell) => {
        const colId = cell.column.id;
        const info = COLUMN_INFO[colId];
        const isActive = colId === activeCol;
        const isEditing = !!editing && editing.col === colId;
        const spec = info?.field;
        const key = problemKey(m.id, colId);
        const problem = problems[key];
        const isSaving = !!saving[key];
        const notes = spec ? cellNotes(m, spec.key) : [];
        const state = problem ? (problem.kind === 'stale' ? 'stale' : 'refused') : isSaving ? 'saving' : notes.length ? 'warning' : 'ok';
        const left = frozen.left[colId];
        const sticky: CSSProperties | undefined =
          left === undefined ? undefined : { position: 'sticky', left, zIndex: 5, backgroundColor: frozenGround(m, index, selected, isActive, !!problem), boxShadow: frozen.last === colId && !isActive && !problem ? FROZEN_EDGE : undefined };
        return (
          <div
            role="gridcell"
            key={cell.id}
            id={cellId(batchId, index, colId)}
            aria-selected={info?.navigable ? isActive : undefined}
            aria-readonly={spec ? !spec.editable || readOnly : undefined}
            aria-invalid={problem ? true : undefined}
            data-col={colId}
            data-cell-state={state}
            title={spec ? cellTitle(spec.key, m, notes) : undefined}
            onClick={() => handlers.current.onCellClick({ row: index, col: colId })}
            data-frozen={left !== undefined || undefined}
            style={{ scrollMarginTop: HEADER_H, scrollMarginLeft: left === undefined ? frozen.width : undefined, ...sticky }}
            className={`relative flex min-w-0 items-center px-2 py-1 ${info?.align === 'right' ? 'justify-end text-right' : ''} ${isEditing ? 'p-0' : ''} ${
              problem ? 'bg-bad/10 ring-2 ring-inset ring-bad' : isActive ? 'bg-veil-soft/70 ring-2 ring-inset ring-veil' : ''
            } ${isSaving ? 'italic text-muted' : ''} ${spec?.editable && !readOnly ? 'cursor-cell' : ''}`}
          >
            {isEditing && spec ? (
              <CellEditor
                initial={editing.text}
                selectAll={editing.selectAll}
                label={`${spec.header}, line ${m.line}`}
                numeric={spec.kind === 'number'}
                onCommit={(...a) => handlers.current.commit(...a)}
                onCancel={() => handlers.current.cancelEdit()}
              />
            ) : (
              flexRender(cell.column.columnDef.cell, cell.getContext())
            )}
            {!isEditing && notes.length > 0 && !problem && <span aria-hidden data-testid="cell-note" className="pointer-events-none absolute right-0 top-0 h-0 w-0 border-l-[7px] border-t-[7px] border-l-transparent border-t-amber" />}
            {problem && !isEditing && !anyEditing && (key === latestProblem || isActive) && (
              <ProblemPopover problem={problem} alignRight={info?.align === 'right'} onDismiss={() => handlers.current.dropProblem(key)} onReload={() => handlers.current.reloadRow(problem, key)} />
            )}
          </div>
        );
      })}
    </div>
  );
}, sameRow);

function cellTitle(key: FieldKey, m: ReviewRow, notes: string[]): string | undefined {
  const parts: string[] = [];
  const v = m[key];
  if (typeof v === 'number') parts.push(String(v));
  if (key === 'distance_pc' && m.distance_lo_pc != null && m.distance_hi_pc != null) parts.push(`16th–84th percentile ${m.distance_lo_pc.toFixed(0)}–${m.distance_hi_pc.toFixed(0)} pc`);
  for (const n of notes) parts.push(`⚠ ${n}`);
  return parts.length ? parts.join('\n') : undefined;
}

function CellEditor({ initial, selectAll, label, numeric, onCommit, onCancel }: { initial: string; selectAll: boolean; label: string; numeric: boolean; onCommit: (text: string, dRow: number, dCol: number, refocus?: boolean) => void; onCancel: () => void }) {
  const ref = useRef<HTMLInputElement>(null);
  useEffect(() => {
    const el = ref.current;
    if (!el) return;
    el.focus({ preventScroll: true });
    if (selectAll) el.select();
    else el.setSelectionRange(el.value.length, el.value.length);
  }, [selectAll]);
  return (
    <input
      ref={ref}
      defaultValue={initial}
      aria-label={label}
      data-testid="cell-editor"
      inputMode={numeric ? 'decimal' : 'text'}
      spellCheck={false}
      onClick={(e) => e.stopPropagation()}
      onKeyDown={(e) => {
        e.stopPropagation();
        if (e.key === 'Enter') {
          e.preventDefault();
          onCommit(e.currentTarget.value, e.shiftKey ? -1 : 1, 0);
        } else if (e.key === 'Tab') {
          e.preventDefault();
          onCommit(e.currentTarget.value, 0, e.shiftKey ? -1 : 1);
        } else if (e.key === 'Escape') {
          e.preventDefault();
          onCancel();
        }
      }}
      onBlur={(e) => onCommit(e.currentTarget.value, 0, 0, false)}
      className={`h-full w-full min-w-0 border-0 bg-white px-2 text-[13px] text-ink outline-none ring-2 ring-inset ring-night ${numeric ? 'num text-right font-mono' : ''}`}
    />
  );
}


type Rect = { left: number; top: number; right: number; bottom: number };
const overlaps = (a: Rect, b: Rect) => a.left < b.right && b.left < a.right && a.top < b.bottom && b.top < a.bottom;

/**
 * Where a refusal opens: below, above, right or left of its cell — the first place that lies wholly inside
 * the grid's visible area (under the sticky header) and does not cover the active cell.
 */
function placePopover(cell: Rect, pop: { w: number; h: number }, area: Rect, avoid: Rect | null, alignRight: boolean): CSSProperties {
  const gap = 2;
  const cw = cell.right - cell.left, ch = cell.bottom - cell.top;
  const xAligned = alignRight ? cell.right - pop.w : cell.left;
  const candidates: [CSSProperties, Rect][] = [
    [{ top: ch + gap, [alignRight ? 'right' : 'left']: 0 }, { left: xAligned, top: cell.bottom + gap, right: xAligned + pop.w, bottom: cell.bottom + gap + pop.h }],
    [{ bottom: ch + gap, [alignRight ? 'right' : 'left']: 0 }, { left: xAligned, top: cell.top - gap - pop.h, right: xAligned + pop.w, bottom: cell.top - gap }],
    [{ top: 0, left: cw + gap }, { left: cell.right + gap, top: cell.top, right: cell.right + gap + pop.w, bottom: cell.top + pop.h }],
    [{ top: 0, right: cw + gap }, { left: cell.left - gap - pop.w, top: cell.top, right: cell.left - gap, bottom: cell.top + pop.h }],
  ];
  // how far a place reaches outside the visible area (0: wholly inside)
  const overflow = (r: Rect) => Math.max(0, area.left - r.left) + Math.max(0, r.right - area.right) + Math.max(0, area.top - r.top) + Math.max(0, r.bottom - area.bottom);
  const free = candidates.filter(([, r]) => !(avoid && overlaps(r, avoid)));
  const [style, r] = (free.length ? free : candidates).reduce((best, c) => (overflow(c[1]) < overflow(best[1]) ? c : best));
  // what still sticks out is moved back inside the grid
  const dx = r.right > area.right ? area.right - r.right : r.left < area.left ? area.left - r.left : 0;
  const dy = r.bottom > area.bottom ? area.bottom - r.bottom : r.top < area.top ? area.top - r.top : 0;
  return dx || dy ? { ...style, transform: `translate(${dx}px, ${dy}px)` } : style;
}

function ProblemPopover({ problem, alignRight, onDismiss, onReload }: { problem: Problem; alignRight: boolean; onDismiss: () => void; onReload: () => void }) {
  const spec = FIELD_BY_KEY.get(problem.field);
  const ref = useRef<HTMLDivElement>(null);
  const [place, setPlace] = useState<CSSProperties>({ top: '100%', visibility: 'hidden' });
  useLayoutEffect(() => {
    const el = ref.current;
    const cellEl = el?.parentElement;
    const grid = el?.closest('[role="grid"]');
    if (!el || !cellEl || !grid) return;
    const g = grid.getBoundingClientRect();
    const header = grid.querySelector('[role="rowgroup"]')?.getBoundingClientRect();
    const area = { left: g.left + 1, right: g.left + grid.clientWidth - 1, top: (header?.bottom ?? g.top) - 1, bottom: g.top + grid.clientHeight - 1 };
    const cell = cellEl.getBoundingClientRect();
    const id = grid.getAttribute('aria-activedescendant');
    const activeEl = id ? document.getElementById(id) : null;
    const avoid = activeEl && activeEl !== cellEl ? activeEl.getBoundingClientRect() : null;
    setPlace(placePopover(cell, { w: el.offsetWidth, h: el.offsetHeight }, area, avoid, alignRight));
  }, [alignRight, problem]);
  return (
    <div
      ref={ref}
      role="alert"
      data-testid="cell-problem"
      data-kind={problem.kind}
      onClick={(e) => e.stopPropagation()}
      style={place}
      className="absolute z-30 w-80 max-w-[min(20rem,80vw)] whitespace-normal rounded-md border border-bad/50 bg-card p-2.5 text-left text-xs not-italic leading-snug text-ink shadow-lg"
    >
      {problem.kind === 'refused' ? (
        <p>
          <b className="text-bad">Not saved.</b> Line {problem.line}, {spec?.header ?? problem.field}: “{problem.typed === '' ? '(empty)' : problem.typed}” — {problem.message}.
        </p>
      ) : (
        <p>
          <b className="text-bad">Not saved: changed by someone else.</b> Line {problem.line} is now at version {problem.current.version}; the server has {spec?.header ?? problem.field} ={' '}
          <span className="num font-mono font-semibold">{spec ? formatField(spec, (problem.current as Record<string, unknown>)[problem.field]) : String((problem.current as Record<string, unknown>)[problem.field])}</span>. Your “{problem.typed}” was not written.
        </p>
      )}
      <div className="mt-2 flex gap-2">
        {problem.kind === 'stale' && (
          <button type="button" onClick={onReload} className="rounded bg-night px-2 py-0.5 text-white hover:bg-night-2">
            Load the current values
          </button>
        )}
        <button type="button" onClick={onDismiss} className="rounded border border-line px-2 py-0.5 text-night hover:bg-veil-soft">
          Dismiss
        </button>
      </div>
    </div>
  );
}

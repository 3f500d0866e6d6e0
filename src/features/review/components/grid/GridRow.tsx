import { flexRender, type Row } from '@tanstack/react-table';
import { memo, type CSSProperties } from 'react';
import { cellNotes, type FieldKey } from '../../fields';
import type { ReviewRow } from '../../types';
import { COLUMN_INFO, type frozenOffsets } from '../gridColumns';
import { CellEditor } from './CellEditor';
import { cellId, estimateRow, FROZEN_EDGE, frozenGround, HEADER_H, ROW_H, type Cell, type EditingCell } from './layout';
import { ProblemPopover } from './ProblemPopover';
import { problemKey, type Problem } from './problems';

/** What a row's cells call back into: always the grid's current handlers (read through a ref). */
export interface RowHandlers {
  onCellClick: (cell: Cell) => void;
  commit: (text: string, dRow: number, dCol: number, refocus?: boolean) => void;
  cancelEdit: () => void;
  dropProblem: (key: string) => void;
  reloadRow: (p: Problem, key: string) => void;
}

export interface GridRowProps {
  index: number;
  top: number;
  m: ReviewRow;
  /** TanStack's row for the cells; rebuilt whenever the rows in view change, so not compared */
  tableRow: Row<ReviewRow>;
  selected: boolean;
  /** the active column, when the active cell is in this row */
  activeCol: string | null;
  editing: EditingCell | null;
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

/** One measurement as a grid row: its cells, the editor over the cell being typed in, a refusal's popover. */
export const GridRow = memo(function GridRow({ index, top, m, tableRow, selected, activeCol, editing, anyEditing, frozen, problems, latestProblem, saving, template, width, readOnly, batchId, measure, handlers }: GridRowProps) {
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

import { createColumnHelper, type ColumnDef } from '@tanstack/react-table';
import type { MouseEvent, ReactNode } from 'react';
import { fixed } from '../../../lib/format';
import { FIELDS, type FieldSpec } from '../fields';
import type { Competing, MeasurementSort, ReviewRow } from '../types';
import { MeasurementStateBadge } from '../../../components/ui/MeasurementStateBadge';
import { competingName } from './ResolveControls';

const col = createColumnHelper<ReviewRow>();

/** What the grid needs to know about each of its columns beyond TanStack's definition. */
export interface GridColumnInfo {
  /** the measurement field shown, if the column is one */
  field?: FieldSpec;
  sort?: MeasurementSort;
  align?: 'right';
  /** false: the keyboard skips it (the selection checkboxes) */
  navigable: boolean;
  /** always shown (no entry in the columns menu) */
  fixed?: boolean;
}

export const SELECT_COLUMN = 'select';
export const HISTORY_COLUMN = 'history';
export const RESOLVE_COLUMN = 'resolve';

/** Columns that stay in place while the table scrolls sideways, so one always knows which row is edited. */
export const FROZEN_COLUMNS = new Set([SELECT_COLUMN, 'line', 'state', 'star']);

/**
 * Left offsets (px) of the frozen columns among the visible ones: only a leading run of frozen
 * columns can stay put; `last` is the rightmost, which draws the edge shadow.
 */
export function frozenOffsets(visible: { id: string; size: number }[]): { left: Record<string, number>; last: string | null; width: number } {
  const left: Record<string, number> = {};
  let x = 0;
  let last: string | null = null;
  for (const c of visible) {
    if (!FROZEN_COLUMNS.has(c.id)) break;
    left[c.id] = x;
    x += c.size;
    last = c.id;
  }
  return { left, last, width: x };
}

export const COLUMN_INFO: Record<string, GridColumnInfo> = {
  [SELECT_COLUMN]: { navigable: false, fixed: true },
  line: { sort: 'line', align: 'right', navigable: true, fixed: true },
  state: { sort: 'state', navigable: true },
  star: { sort: 'star_name', navigable: true },
  [RESOLVE_COLUMN]: { navigable: true },
  ...Object.fromEntries(FIELDS.map((f) => [f.key, { field: f, sort: f.sort, align: f.kind === 'number' ? ('right' as const) : undefined, navigable: true }])),
  notes: { navigable: true },
  [HISTORY_COLUMN]: { navigable: true },
};

export const COLUMN_TITLES: Record<string, string> = {
  line: 'line',
  state: 'state',
  star: 'star',
  [RESOLVE_COLUMN]: 'to settle',
  notes: 'notes',
  [HISTORY_COLUMN]: 'history',
  ...Object.fromEntries(FIELDS.map((f) => [f.key, f.header])),
};

/** A number with the column's precision; the full value is in the cell's title. */
export function formatField(spec: FieldSpec, v: unknown): string {
  if (v === null || v === undefined || v === '') return '—';
  if (spec.kind === 'number') return typeof v === 'number' ? fixed(v, spec.digits ?? 3) : String(v);
  return spec.key === 'distance_method' ? String(v).replace(/_/g, ' ') : String(v);
}

const COMPETING_KEYS = new Set<keyof Competing>(['mjd', 'q', 'u', 'q_err', 'u_err', 'p', 'theta_deg']);

function FieldValue({ spec, row }: { spec: FieldSpec; row: ReviewRow }) {
  const v = row[spec.key];
  const earlier = row.competing && COMPETING_KEYS.has(spec.key as keyof Competing) ? (row.competing as unknown as Record<string, unknown>)[spec.key] : undefined;
  const differs = earlier !== undefined && earlier !== v;
  return (
    <div className="min-w-0 leading-4">
      <div className={`truncate ${spec.kind === 'number' ? 'num font-mono' : ''}`} data-testid="cell-value">
        {formatField(spec, v)}
      </div>
      {earlier !== undefined && (
        <div className={`num truncate font-mono text-[11px] ${differs ? 'text-warn' : 'text-muted'}`} data-testid="competing-value" title={`The earlier row (${competingName(row.competing!)}) has ${String(earlier)}`}>
          {differs ? 'was ' : '= '}
          {formatField(spec, earlier)}
        </div>
      )}
    </div>
  );
}

function StarValue({ row }: { row: ReviewRow }) {
  if (row.state === 'ambiguous' && row.candidates.length > 0) {
    return (
      <div className="text-xs leading-4">
        <div className="font-medium text-night">{row.candidates.length} stars within reach</div>
        {row.candidates.map((c) => (
          <div key={c.id} className="truncate text-muted" data-testid="candidate">
            {c.name} <span className="num">{c.separationArcsec.toFixed(2)}″</span>
          </div>
        ))}
      </div>
    );
  }
  if (!row.star_name && row.state === 'ambiguous') return <span className="text-xs text-amber-deep" data-testid="held-untied">held: no star within reach — attach or make a new one</span>;
  if (!row.star_name) return <span className="text-muted">—</span>;
  const sep = row.star_separation_arcsec;
  const sepText = sep == null ? null : sep >= 3600 ? `${(sep / 3600).toFixed(2)}°` : sep >= 60 ? `${(sep / 60).toFixed(2)}′` : `${sep.toFixed(2)}″`;
  return (
    <div className="flex min-w-0 items-baseline gap-1.5 leading-4" title={`${row.star_source_id ? `source_id ${row.star_source_id}` : 'no source_id'}${sepText ? ` · ${sepText} from the measured position` : ''}`}>
      <span className="truncate text-night">{row.star_name}</span>
      {sepText && <span className="num shrink-0 text-[11px] text-muted" data-testid="star-separation">{sepText}</span>}
    </div>
  );
}

function NotesValue({ row }: { row: ReviewRow }) {
  const n = row.flags.length + row.warnings.length;
  if (n === 0) return <span className="text-muted">—</span>;
  const text = [...row.flags.map((f) => f.replace(/_/g, ' ')), ...row.warnings.map((w) => `${w.field ?? w.column}: ${w.message}`)];
  return (
    <span className="truncate text-xs text-amber-deep" title={text.join('\n')}>
      {row.flags.length > 0 ? row.flags.map((f) => f.replace(/_/g, ' ')).join(', ') : `${row.warnings.length} warning${row.warnings.length === 1 ? '' : 's'}`}
    </span>
  );
}

/**
 * The table's columns. Cell content only: the grid wraps each cell with its active-cell state,
 * editor, notes and refusals.
 */
export function buildColumns(opts: {
  selectable: boolean;
  resolve: (row: ReviewRow) => ReactNode;
  history: (row: ReviewRow) => ReactNode;
  /** a row's checkbox was clicked (with shift: a range from the last one) */
  onCheck: (e: MouseEvent<HTMLInputElement>, row: ReviewRow) => void;
  /** whether every loaded row is selected (the table itself holds only the rows in view) */
  selectAll: () => { checked: boolean; indeterminate: boolean; toggle: () => void };
}): ColumnDef<ReviewRow, any>[] {
  const cols: ColumnDef<ReviewRow, any>[] = [];
  if (opts.selectable) {
    cols.push(
      col.display({
        id: SELECT_COLUMN,
        size: 36,
        enableResizing: false,
        enableHiding: false,
        header: () => {
          const all = opts.selectAll();
          return (
            <input
              type="checkbox"
              tabIndex={-1}
              aria-label="Select every loaded row"
              checked={all.checked}
              ref={(el) => {
                if (el) el.indeterminate = all.indeterminate;
              }}
              onChange={all.toggle}
              className="h-3.5 w-3.5 accent-night"
            />
          );
        },
        cell: (c) => (
          <input
            type="checkbox"
            tabIndex={-1}
            aria-label={`Select line ${c.row.original.line}`}
            checked={c.row.getIsSelected()}
            onClick={(e) => opts.onCheck(e, c.row.original)}
            onChange={() => undefined}
            className="h-3.5 w-3.5 accent-night"
          />
        ),
      }),
    );
  }
  cols.push(
    col.accessor('line', { id: 'line', header: 'line', size: 60, minSize: 44, enableHiding: false, cell: (c) => <span className="num font-mono text-muted">{c.getValue()}</span> }),
    col.accessor('state', { id: 'state', header: 'state', size: 92, minSize: 70, cell: (c) => <MeasurementStateBadge state={c.getValue()} /> }),
    col.accessor('star_name', { id: 'star', header: 'star', size: 190, minSize: 100, cell: (c) => <StarValue row={c.row.original} /> }),
    col.display({ id: RESOLVE_COLUMN, header: 'to settle', size: 176, minSize: 120, cell: (c) => opts.resolve(c.row.original) }),
    ...FIELDS.map((f) =>
      col.accessor((r) => r[f.key], {
        id: f.key,
        header: f.header,
        size: f.width,
        minSize: 56,
        cell: (c) => <FieldValue spec={f} row={c.row.original} />,
      }),
    ),
    col.display({ id: 'notes', header: 'notes', size: 150, minSize: 80, cell: (c) => <NotesValue row={c.row.original} /> }),
    col.display({ id: HISTORY_COLUMN, header: 'history', size: 72, minSize: 60, enableResizing: false, cell: (c) => opts.history(c.row.original) }),
  );
  return cols;
}

/** Columns shown until the person chooses otherwise. */
export const INITIAL_VISIBILITY: Record<string, boolean> = Object.fromEntries(FIELDS.filter((f) => f.hiddenByDefault).map((f) => [f.key, false]));

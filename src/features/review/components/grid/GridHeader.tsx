import { flexRender, type Table } from '@tanstack/react-table';
import type { MeasurementFilters, ReviewRow } from '../../types';
import { COLUMN_INFO, COLUMN_TITLES, type frozenOffsets } from '../gridColumns';
import { ariaSort, SortMark } from '../../../../components/ui/SortHeader';
import { FROZEN_EDGE, HEADER_H } from './layout';

/** The sticky header row: sort buttons, filter and editable marks, resize handles. */
export function GridHeader({ table, filters, readOnly, frozen, template }: { table: Table<ReviewRow>; filters: MeasurementFilters; readOnly: boolean; frozen: ReturnType<typeof frozenOffsets>; template: string }) {
  return (
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
  );
}

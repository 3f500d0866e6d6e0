import { createColumnHelper, flexRender, getCoreRowModel, useReactTable, type SortingState } from '@tanstack/react-table';
import { Link } from 'react-router-dom';
import { Button, Select } from '../../../components/ui/primitives';
import { fixed, formatCount } from '../../../lib/format';
import { ariaSort, SortMark } from '../../../components/ui/SortHeader';
import type { Star, StarSort } from '../types';

const col = createColumnHelper<Star>();

const COLUMNS = [
  col.accessor('name', {
    id: 'name',
    header: 'star',
    cell: (c) => (
      <Link to={`/catalog/stars/${c.row.original.id}`} className="font-medium text-night underline-offset-2 hover:underline">
        {c.getValue()}
      </Link>
    ),
  }),
  col.accessor('sourceId', { id: 'source_id', header: 'source_id', cell: (c) => <span className="font-mono text-xs text-ink">{c.getValue() ?? '—'}</span> }),
  col.accessor('ra_deg', { id: 'ra_deg', header: 'RA [deg]', cell: (c) => fixed(c.getValue(), 5), meta: { right: true } }),
  col.accessor('dec_deg', { id: 'dec_deg', header: 'Dec [deg]', cell: (c) => fixed(c.getValue(), 5), meta: { right: true } }),
  col.accessor('glon_deg', { id: 'glon_deg', header: 'l [deg]', cell: (c) => fixed(c.getValue(), 3), meta: { right: true } }),
  col.accessor('glat_deg', { id: 'glat_deg', header: 'b [deg]', cell: (c) => fixed(c.getValue(), 3), meta: { right: true } }),
  col.accessor('parallax_mas', {
    id: 'parallax_mas',
    header: 'parallax [mas]',
    cell: (c) => (
      <>
        {fixed(c.getValue(), 4)}
        {c.row.original.parallax_err_mas != null && <span className="text-muted"> ± {fixed(c.row.original.parallax_err_mas, 4)}</span>}
      </>
    ),
    meta: { right: true },
  }),
  col.accessor('nMeasurements', { id: 'n_measurements', header: 'measurements', cell: (c) => formatCount(c.getValue()), meta: { right: true } }),
  col.accessor('separation_deg', { id: 'separation_deg', header: 'separation [deg]', enableSorting: false, cell: (c) => fixed(c.getValue(), 4), meta: { right: true } }),
];

export const PAGE_SIZES = [25, 50, 100, 250];

/** One page of stars from the server; sorting and paging happen there. */
export function StarsTable({
  stars, total, sort, order, cone, pageSize, page, onSort, onPage, onPageSize, fetching,
}: {
  stars: Star[];
  total: number;
  sort: StarSort;
  order: 'asc' | 'desc';
  cone: boolean;
  pageSize: number;
  page: number;
  onSort: (s: StarSort, o: 'asc' | 'desc') => void;
  onPage: (p: number) => void;
  onPageSize: (n: number) => void;
  fetching: boolean;
}) {
  const sorting: SortingState = sort === 'id' ? [] : [{ id: sort, desc: order === 'desc' }];
  const pages = Math.max(1, Math.ceil(total / pageSize));
  const table = useReactTable({
    data: stars,
    columns: COLUMNS,
    getCoreRowModel: getCoreRowModel(),
    getRowId: (s) => String(s.id),
    manualSorting: true,
    manualPagination: true,
    pageCount: pages,
    sortDescFirst: false,
    state: { sorting, columnVisibility: { separation_deg: cone }, pagination: { pageIndex: page, pageSize } },
    onSortingChange: (updater) => {
      const next = typeof updater === 'function' ? updater(sorting) : updater;
      const s = next[0];
      onSort((s?.id as StarSort) ?? 'id', s?.desc ? 'desc' : 'asc');
    },
  });
  const first = total === 0 ? 0 : page * pageSize + 1;
  return (
    <div className="space-y-3">
      <div className="overflow-x-auto rounded-lg border border-line">
        <table className="w-full text-left text-sm" aria-label="Stars" aria-busy={fetching}>
          <thead className="border-b border-line bg-paper text-xs text-muted">
            {table.getHeaderGroups().map((hg) => (
              <tr key={hg.id}>
                {hg.headers.map((h) => {
                  const right = (h.column.columnDef.meta as { right?: boolean } | undefined)?.right;
                  const s = h.column.getIsSorted();
                  return (
                    <th key={h.id} className={`px-3 py-2 font-medium ${right ? 'text-right' : ''}`} aria-sort={h.column.getCanSort() ? ariaSort(!!s, s === 'desc' ? 'desc' : 'asc') : undefined}>
                      {h.column.getCanSort() ? (
                        <button type="button" onClick={h.column.getToggleSortingHandler()} className={`group inline-flex items-center gap-1 hover:text-night ${s ? 'text-night' : ''} ${right ? 'flex-row-reverse' : ''}`}>
                          {flexRender(h.column.columnDef.header, h.getContext())}
                          <SortMark active={!!s} order={s === 'desc' ? 'desc' : 'asc'} />
                        </button>
                      ) : (
                        flexRender(h.column.columnDef.header, h.getContext())
                      )}
                    </th>
                  );
                })}
              </tr>
            ))}
          </thead>
          <tbody className={`num ${fetching ? 'opacity-60' : ''}`}>
            {table.getRowModel().rows.map((r) => (
              <tr key={r.id} className="border-b border-line/60 hover:bg-veil-soft/40" data-star-id={r.original.id}>
                {r.getVisibleCells().map((c) => (
                  <td key={c.id} className={`whitespace-nowrap px-3 py-1.5 ${(c.column.columnDef.meta as { right?: boolean } | undefined)?.right ? 'text-right font-mono text-[13px]' : ''}`}>
                    {flexRender(c.column.columnDef.cell, c.getContext())}
                  </td>
                ))}
              </tr>
            ))}
            {stars.length === 0 && (
              <tr>
                <td colSpan={COLUMNS.length} className="px-3 py-10 text-center text-sm text-muted">
                  No star matches.
                </td>
              </tr>
            )}
          </tbody>
        </table>
      </div>
      <div className="flex flex-wrap items-center justify-between gap-3 text-sm">
        <span className="num text-muted" data-testid="stars-range">
          {formatCount(first)}–{formatCount(Math.min(total, (page + 1) * pageSize))} of {formatCount(total)} stars
          {cone && sort === 'id' ? ' · nearest the centre first' : ''}
        </span>
        <div className="flex items-center gap-2">
          <label className="flex items-center gap-1.5 text-muted">
            per page
            <Select aria-label="Stars per page" value={pageSize} onChange={(e) => onPageSize(Number(e.target.value))}>
              {PAGE_SIZES.map((n) => (
                <option key={n} value={n}>
                  {n}
                </option>
              ))}
            </Select>
          </label>
          <Button tone="quiet" disabled={!table.getCanPreviousPage()} onClick={() => onPage(page - 1)}>
            Previous
          </Button>
          <span className="num text-muted">
            page {formatCount(page + 1)} of {formatCount(pages)}
          </span>
          <Button tone="quiet" disabled={!table.getCanNextPage()} onClick={() => onPage(page + 1)}>
            Next
          </Button>
        </div>
      </div>
    </div>
  );
}

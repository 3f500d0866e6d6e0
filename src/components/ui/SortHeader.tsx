import type { SortOrder } from '../../lib/api/types';

/** A column header that sorts on click; says which way it sorts to screen readers and sighted people alike. */
export function SortHeader({ label, active, order, onSort, title, align = 'left' }: { label: string; active: boolean; order: SortOrder; onSort: () => void; title?: string; align?: 'left' | 'right' }) {
  return (
    <button
      type="button"
      onClick={onSort}
      title={title}
      className={`group inline-flex items-center gap-1 uppercase tracking-wide hover:text-night ${active ? 'text-night' : ''} ${align === 'right' ? 'flex-row-reverse' : ''}`}
    >
      {label}
      <SortMark active={active} order={order} />
    </button>
  );
}

export function SortMark({ active, order }: { active: boolean; order: SortOrder }) {
  return (
    <span aria-hidden className={`text-[10px] ${active ? 'text-veil' : 'text-muted opacity-0 transition-opacity group-hover:opacity-60'}`}>
      {active ? (order === 'asc' ? '▲' : '▼') : '▲'}
    </span>
  );
}

export const ariaSort = (active: boolean, order: SortOrder) => (active ? (order === 'asc' ? 'ascending' : 'descending') : 'none') as 'ascending' | 'descending' | 'none';

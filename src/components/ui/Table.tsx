import type { AriaAttributes, ReactNode } from 'react';

/** One header cell: its text (or control), classes and the optional tooltip and sort state. */
export interface TableColumn {
  label?: ReactNode;
  className?: string;
  title?: string;
  ariaSort?: AriaAttributes['aria-sort'];
}

/** The head row's look: plain small grey, or small grey capitals. */
export const TABLE_HEAD = 'border-b border-line text-xs text-muted';
export const TABLE_HEAD_CAPS = 'border-b border-line text-xs uppercase tracking-wide text-muted';

/**
 * A labelled table that scrolls sideways on narrow screens: one header row from `columns`
 * (`false` leaves a column out), the rows as children, anything after the table (notes) as `after`.
 */
export function DataTable({
  label,
  columns,
  children,
  className = 'w-full text-left text-sm',
  headClassName = TABLE_HEAD,
  bodyClassName,
  after,
}: {
  label: string;
  columns: (TableColumn | false)[];
  children: ReactNode;
  className?: string;
  headClassName?: string;
  bodyClassName?: string;
  after?: ReactNode;
}) {
  return (
    <div className="overflow-x-auto">
      <table className={className} aria-label={label}>
        <thead className={headClassName}>
          <tr>
            {columns.map((c, i) =>
              c === false ? null : (
                <th key={i} className={c.className} title={c.title} aria-sort={c.ariaSort}>
                  {c.label}
                </th>
              ),
            )}
          </tr>
        </thead>
        <tbody className={bodyClassName}>{children}</tbody>
      </table>
      {after}
    </div>
  );
}

/** Header cells that share their classes: `cols('pr-3 text-right', 'rows', 'accepted')`. */
export const cols = (className: string, ...labels: ReactNode[]): TableColumn[] => labels.map((label) => ({ label, className }));

import { cols, DataTable, TABLE_HEAD_CAPS } from '../../../components/ui/Table';
import type { IntakeColumn } from '../types';

/** The columns Starveil reads: name, unit, rule, meaning and the other spellings it recognises. */
export function ColumnGuideTable({ columns }: { columns: IntakeColumn[] }) {
  return (
    <DataTable
      label="Columns Starveil reads"
      headClassName={TABLE_HEAD_CAPS}
      columns={[{ label: 'Column', className: 'py-2 pr-4' }, ...cols('pr-4', 'Unit', 'Needed', 'Meaning'), { label: 'Also recognised as' }]}
    >
      {columns.map((c) => (
        <tr key={c.name} className="border-b border-line/60 align-top">
          <td className="py-2 pr-4">
            <code className="font-semibold text-night">{c.name}</code>
          </td>
          <td className="whitespace-nowrap py-2 pr-4 text-ink">{c.unit || '—'}</td>
          <td className="max-w-[22rem] py-2 pr-4 text-ink">
            <RequiredRule rule={c.required} />
          </td>
          <td className="py-2 pr-4 text-ink">{c.description}</td>
          <td className="py-2">
            <div className="flex flex-wrap gap-1">
              {c.synonyms.length === 0 && <span className="text-muted">—</span>}
              {c.synonyms.map((s) => (
                <code key={s} className="rounded bg-veil-soft px-1.5 py-0.5 text-xs text-night">
                  {s}
                </code>
              ))}
            </div>
          </td>
        </tr>
      ))}
    </DataTable>
  );
}

/** The server's plain rule; a short emphasis when it is simply required or optional. */
export function RequiredRule({ rule }: { rule: string }) {
  const r = rule.trim().toLowerCase();
  if (r === 'yes' || r === 'required' || r === 'always') return <span className="font-medium text-bad">required</span>;
  if (r === 'no' || r === 'optional' || r === '') return <span className="text-muted">optional</span>;
  return <span>{rule}</span>;
}

import type { RowSelectionState } from '@tanstack/react-table';
import { useCallback, useMemo, useRef, useState, type MouseEvent } from 'react';
import type { ReviewRow } from '../../types';

/**
 * Which rows are ticked (by id): a checkbox click ticks one, shift-click the range from the last
 * one clicked; the header box ticks or clears every loaded row; Space toggles the active row.
 */
export function useRowSelection(data: ReviewRow[]) {
  const [rowSelection, setRowSelection] = useState<RowSelectionState>({});
  const lastChecked = useRef<number | null>(null);

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

  const selectedCount = Object.keys(rowSelection).length;
  /** the header checkbox, read by its cell renderer when it draws */
  const selectAllRef = useRef({ checked: false, indeterminate: false, toggle: () => {} });
  selectAllRef.current = {
    checked: data.length > 0 && selectedCount >= data.length,
    indeterminate: selectedCount > 0 && selectedCount < data.length,
    toggle: () => setRowSelection(selectedCount >= data.length ? {} : Object.fromEntries(data.map((r) => [String(r.id), true]))),
  };

  const toggleRow = (row: ReviewRow) =>
    setRowSelection((sel) => {
      const { [String(row.id)]: was, ...rest } = sel;
      return was ? rest : { ...sel, [String(row.id)]: true };
    });

  /** nothing ticked, and the next shift-click starts a new range */
  const clearSelection = useCallback(() => {
    setRowSelection({});
    lastChecked.current = null;
  }, []);

  return { rowSelection, setRowSelection, onCheck, selectAllRef, toggleRow, clearSelection };
}

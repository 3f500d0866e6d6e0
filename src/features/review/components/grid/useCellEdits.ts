import { useQueryClient } from '@tanstack/react-query';
import { useCallback, useRef, useState } from 'react';
import { patchCachedRow, rowPatchFromStored } from '../../api/cache';
import { refusalFor, staleCurrent, useEditMeasurement } from '../../api/editMeasurement';
import { editText, FIELD_BY_KEY, isEditableField, parseEdit, type FieldKey } from '../../fields';
import type { ReviewRow } from '../../types';
import type { Cell, EditingCell } from './layout';
import { problemKey, type Problem } from './problems';

/**
 * Editing cells in place: which cell is being typed in, edits on their way to the server, the
 * ones it refused (or that met a newer version) until dismissed, and the hint shown when the
 * active cell cannot be edited. `move` and `setActive` come from the grid's navigation.
 */
export function useCellEdits({ batchId, data, readOnly, move, setActive, focusGrid }: { batchId: number; data: ReviewRow[]; readOnly: boolean; move: (dRow: number, dCol: number, from?: Cell) => void; setActive: (cell: Cell) => void; focusGrid: () => void }) {
  const qc = useQueryClient();
  const [editing, setEditing] = useState<EditingCell | null>(null);
  const editingRef = useRef<EditingCell | null>(null);
  const [problems, setProblems] = useState<Record<string, Problem>>({});
  const [latestProblem, setLatestProblem] = useState<string | null>(null);
  const [saving, setSaving] = useState<Record<string, true>>({});
  /** why the active cell cannot be edited, shown while it stays active */
  const [hint, setHint] = useState<(Cell & { text: string }) | null>(null);

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

  const canEdit = (cell: Cell) => !readOnly && isEditableField(cell.col) && !!data[cell.row];

  /** Open the editor on a cell (with the typed character, or the full stored value selected); false when it cannot be edited. */
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

  /** A stale edit's "Load the current values": the server's row replaces the listed one. */
  const reloadRow = (p: Problem, key: string) => {
    if (p.kind !== 'stale') return;
    patchCachedRow(qc, batchId, p.current.id, () => rowPatchFromStored(p.current));
    dropProblem(key);
  };

  return { editing, editingRef, problems, latestProblem, saving, hint, canEdit, startEdit, cancelEdit, commit, dropProblem, reloadRow };
}

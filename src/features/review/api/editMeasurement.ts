import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api, ApiError } from '../../../lib/apiClient';
import type { EditableField, ReviewRow, StoredMeasurement } from '../types';
import type { MeasurementEditAnswer } from '../../../lib/api/types';
import { findCachedRow, mergeWarnings, patchCachedRow, rowPatchFromStored } from './cache';
import { measurementHistoryQueryOptions } from './history';

export interface EditInput {
  id: number;
  field: EditableField;
  value: number | string | null;
  reason?: string;
  /** for messages only: what the person typed, and the row's line in the file */
  typed?: string;
  line?: number;
}

export type EditAnswer = MeasurementEditAnswer;

export const editMeasurement = (id: number, body: { changes: Partial<Record<EditableField, number | string | null>>; version: number; reason?: string }) =>
  api.patch<EditAnswer>(`/measurements/${id}`, body);

export interface EditCallbacks {
  onSaved?: (input: EditInput, answer: EditAnswer) => void;
  onFailed?: (input: EditInput, error: Error) => void;
}

/**
 * One cell edit: the new value shows at once (optimistic), and goes back to what it was if the
 * server refuses it. Edits of a batch run one after another, each against the version the cache
 * holds by then, so two quick edits of one row never race each other into a 409.
 */
export function useEditMeasurement(batchId: number, callbacks: EditCallbacks = {}) {
  const qc = useQueryClient();
  return useMutation({
    scope: { id: `review-edits-${batchId}` },
    mutationFn: (input: EditInput) => {
      const row = findCachedRow(qc, batchId, input.id);
      if (!row) throw new Error(`Measurement ${input.id} is no longer loaded; reload the table.`);
      return editMeasurement(input.id, { changes: { [input.field]: input.value }, version: row.version, ...(input.reason ? { reason: input.reason } : {}) });
    },
    onMutate: (input) => {
      const before = findCachedRow(qc, batchId, input.id);
      const previous = before ? (before as unknown as Record<string, unknown>)[input.field] : undefined;
      patchCachedRow(qc, batchId, input.id, () => ({ [input.field]: input.value }) as Partial<ReviewRow>);
      return { previous, had: before !== undefined };
    },
    onError: (error, input, context) => {
      if (context?.had) patchCachedRow(qc, batchId, input.id, () => ({ [input.field]: context.previous }) as Partial<ReviewRow>);
      callbacks.onFailed?.(input, error);
    },
    onSuccess: (answer, input) => {
      patchCachedRow(qc, batchId, input.id, (row) => ({ ...rowPatchFromStored(answer.measurement), warnings: mergeWarnings(row.warnings, input.field, answer.warnings ?? []) }));
      // a new position re-runs the match on the server: the tied star, its separation and the candidates change with it
      if ((input.field === 'ra_deg' || input.field === 'dec_deg') && answer.measurement.star_id !== undefined) {
        patchCachedRow(qc, batchId, input.id, (row) => (answer.measurement.star_id === null && row.star_id !== null ? { ...row, star_id: null, star_name: null, star_source_id: null, star_separation_arcsec: null } : row));
        void qc.invalidateQueries({ queryKey: ['review', 'measurements', batchId] });
      }
      callbacks.onSaved?.(input, answer);
    },
    onSettled: (_a, _e, input) => {
      void qc.invalidateQueries({ queryKey: measurementHistoryQueryOptions(input.id).queryKey });
      void qc.invalidateQueries({ queryKey: ['catalog', 'star'] });
    },
  });
}

/** The current stored row a 409 answer carries, if it is one. */
export function staleCurrent(error: unknown): StoredMeasurement | null {
  if (error instanceof ApiError && error.status === 409) {
    const current = (error.details as { current?: StoredMeasurement } | undefined)?.current;
    return current ?? null;
  }
  return null;
}

/** The reason a 400 answer gives for one field (details.fields), else the whole message. */
export function refusalFor(error: unknown, field: string): string {
  if (error instanceof ApiError) {
    const fields = (error.details as { fields?: { field: string; message: string }[] } | undefined)?.fields ?? [];
    const hit = fields.find((f) => f.field === field) ?? fields[0];
    if (hit) return hit.field === field ? hit.message : `${hit.field}: ${hit.message}`;
  }
  return error instanceof Error ? error.message : String(error);
}

import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/apiClient';
import type { Batch, ColumnMapping } from '../types';
import { batchQueryOptions } from '../../../lib/api/batch';

export interface SubmitMappingInput {
  batchId: number;
  mapping: ColumnMapping;
  saveForInstrument: boolean;
}

export const submitMapping = ({ batchId, mapping, saveForInstrument }: SubmitMappingInput) =>
  api.post<Batch>(`/batches/${batchId}/mapping`, { mapping, saveForInstrument });

export function useSubmitMapping() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: submitMapping,
    onSuccess: (batch) => {
      qc.setQueryData(batchQueryOptions(batch.id).queryKey, batch);
      qc.invalidateQueries({ queryKey: ['intake', 'rows', batch.id] });
      qc.invalidateQueries({ queryKey: ['intake', 'batches'] });
    },
  });
}

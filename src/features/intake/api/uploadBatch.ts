import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useCallback, useRef, useState } from 'react';
import { sendMultipart, type UploadProgress } from '../../../lib/upload';
import type { Batch, ColumnMapping } from '../types';
import { batchQueryOptions } from '../../../lib/api/batch';

export interface UploadBatchInput {
  file: File;
  /** instrument code */
  instrument?: string;
  mapping?: ColumnMapping;
}

export interface UploadBatchResult {
  batch: Batch;
  /** true when these exact bytes had been uploaded before (the server answers 200 with that batch) */
  seenBefore: boolean;
}

export async function uploadBatch(input: UploadBatchInput, opts: { onProgress?: (p: UploadProgress) => void; signal?: AbortSignal } = {}): Promise<UploadBatchResult> {
  const form = new FormData();
  if (input.instrument) form.append('instrument', input.instrument);
  if (input.mapping) form.append('mapping', JSON.stringify(input.mapping));
  form.append('file', input.file, input.file.name); // last, so the fields arrive before the stream
  const { status, data } = await sendMultipart<Batch>('/batches', form, opts);
  return { batch: data, seenBefore: status === 200 };
}

/** Upload with the bytes-sent progress kept in state, and a way to cancel. */
export function useUploadBatch() {
  const qc = useQueryClient();
  const [progress, setProgress] = useState<UploadProgress | null>(null);
  const abort = useRef<AbortController | null>(null);
  const mutation = useMutation({
    mutationFn: (input: UploadBatchInput) => {
      abort.current = new AbortController();
      setProgress({ sentBytes: 0, totalBytes: null });
      return uploadBatch(input, { onProgress: setProgress, signal: abort.current.signal });
    },
    onSuccess: ({ batch }) => {
      qc.setQueryData(batchQueryOptions(batch.id).queryKey, batch);
      qc.invalidateQueries({ queryKey: ['intake', 'batches'] });
    },
    onSettled: () => {
      abort.current = null;
    },
  });
  const cancel = useCallback(() => abort.current?.abort(), []);
  return { upload: mutation, progress, cancel };
}

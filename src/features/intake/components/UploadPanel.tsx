import { useEffect, useRef, useState, type DragEvent, type FormEvent } from 'react';
import { useNavigate } from 'react-router-dom';
import { Button, Card, Field, Notice, Select } from '../../../components/ui/primitives';
import { ApiError } from '../../../lib/apiClient';
import { useBatch, WORKING_STATES } from '../../../lib/api/batch';
import { useInstruments } from '../../../lib/api/instruments';
import { useUploadBatch } from '../api/uploadBatch';
import { formatBytes } from '../../../lib/format';
import type { FieldProblem } from '../types';
import { ProgressBar } from '../../../components/ui/ProgressBar';
import { CheckProgress } from './CheckProgress';

function looksLikeCsv(f: File) {
  return /\.(csv|txt)$/i.test(f.name) || f.type === 'text/csv';
}

function fieldProblems(err: unknown): FieldProblem[] {
  if (!(err instanceof ApiError)) return [];
  const fields = (err.details as { fields?: FieldProblem[] } | undefined)?.fields;
  return Array.isArray(fields) ? fields : [];
}

/** Pick or drop a CSV, send it with a bytes-sent bar, follow the server's check, then open the batch. */
export function UploadPanel() {
  const navigate = useNavigate();
  const instruments = useInstruments();
  const { upload, progress, cancel } = useUploadBatch();
  const [file, setFile] = useState<File | null>(null);
  const [instrument, setInstrument] = useState('');
  const [dragging, setDragging] = useState(false);
  const input = useRef<HTMLInputElement>(null);

  const uploaded = upload.data;
  const batch = useBatch(uploaded?.batch.id ?? null);
  const current = batch.data ?? uploaded?.batch;
  const working = !!current && WORKING_STATES.includes(current.state);

  useEffect(() => {
    if (current && !WORKING_STATES.includes(current.state)) {
      navigate(`/batches/${current.id}`, { state: { seenBefore: uploaded?.seenBefore ?? false } });
    }
  }, [current, navigate, uploaded?.seenBefore]);

  const choose = (f: File | null | undefined) => {
    if (!f) return;
    upload.reset();
    setFile(f);
  };

  const onDrop = (e: DragEvent) => {
    e.preventDefault();
    setDragging(false);
    choose(e.dataTransfer.files?.[0]);
  };

  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (!file) return;
    upload.mutate({ file, instrument: instrument || undefined });
  };

  const busy = upload.isPending || working;
  const problems = fieldProblems(upload.error);

  return (
    <Card title="Send a night's batch">
      <form onSubmit={submit} className="space-y-5" aria-label="Upload a batch">
        <div
          onDragOver={(e) => {
            e.preventDefault();
            setDragging(true);
          }}
          onDragLeave={() => setDragging(false)}
          onDrop={onDrop}
          data-testid="drop-zone"
          className={`flex flex-col items-center gap-3 rounded-xl border-2 border-dashed px-6 py-10 text-center transition ${
            dragging ? 'border-amber bg-amber/10' : 'border-veil/50 bg-veil-soft/40'
          }`}
        >
          <svg width="40" height="40" viewBox="0 0 40 40" aria-hidden className="text-veil">
            <path d="M20 27V9m0 0-7 7m7-7 7 7" fill="none" stroke="currentColor" strokeWidth="2.4" strokeLinecap="round" strokeLinejoin="round" />
            <path d="M8 26v5a2 2 0 0 0 2 2h20a2 2 0 0 0 2-2v-5" fill="none" stroke="currentColor" strokeWidth="2.4" strokeLinecap="round" />
          </svg>
          <div className="text-sm text-ink">
            Drop a CSV file here, or{' '}
            <label className="cursor-pointer font-medium text-veil underline underline-offset-2 hover:text-night">
              choose one
              <input
                ref={input}
                type="file"
                aria-label="CSV file"
                accept=".csv,text/csv,text/plain"
                className="sr-only"
                disabled={busy}
                onChange={(e) => choose(e.target.files?.[0])}
              />
            </label>
          </div>
          {file ? (
            <div data-testid="chosen-file" className="rounded-md bg-card px-3 py-1.5 text-sm shadow-sm">
              <span className="font-medium text-night">{file.name}</span> <span className="num text-muted">· {formatBytes(file.size)}</span>
            </div>
          ) : (
            <div className="text-xs text-muted">One header line, then one row per measurement. Comma-separated, UTF-8.</div>
          )}
          {file && !looksLikeCsv(file) && <div className="text-xs text-warn">This file's name does not end in .csv; the server will say whether it can read it.</div>}
        </div>

        <div className="grid gap-4 md:grid-cols-2">
          <Field label="Instrument" hint="Optional. When given, a mapping saved for this instrument is applied, and rows without an instrument column get this one.">
            <Select aria-label="Instrument" className="w-full" value={instrument} disabled={busy} onChange={(e) => setInstrument(e.target.value)}>
              <option value="">Not given — the file says per row</option>
              {instruments.data?.instruments.map((i) => (
                <option key={i.code} value={i.code}>
                  {i.code} — {i.name} ({i.bands.join(', ')})
                </option>
              ))}
            </Select>
          </Field>
          {instruments.error && <Notice tone="bad">Instruments could not be loaded: {instruments.error.message}</Notice>}
        </div>

        {upload.isPending && progress && (
          <ProgressBar
            label="Sending the file"
            done={progress.sentBytes}
            total={progress.totalBytes}
            detail={`${formatBytes(progress.sentBytes)}${progress.totalBytes ? ` of ${formatBytes(progress.totalBytes)}` : ''}`}
          />
        )}
        {working && current && <CheckProgress batch={current} />}
        {batch.error && <Notice tone="bad">The server's progress could not be read: {batch.error.message}</Notice>}

        {upload.error && !(upload.error instanceof ApiError && upload.error.code === 'aborted') && (
          <Notice tone="bad">
            <span data-testid="upload-error">{upload.error.message}</span>
            {problems.length > 0 && (
              <ul className="mt-1 list-disc pl-5">
                {problems.map((p) => (
                  <li key={p.field + p.message}>
                    <b>{p.field}</b>: {p.message}
                  </li>
                ))}
              </ul>
            )}
          </Notice>
        )}
        {upload.error instanceof ApiError && upload.error.code === 'aborted' && <Notice>The upload was cancelled before the server answered.</Notice>}

        <div className="flex items-center gap-3">
          <Button type="submit" disabled={!file || busy}>
            {upload.isPending ? 'Sending…' : working ? 'Checking…' : 'Upload and check'}
          </Button>
          {upload.isPending && (
            <Button type="button" tone="quiet" onClick={cancel}>
              Cancel
            </Button>
          )}
          {file && !busy && (
            <Button
              type="button"
              tone="quiet"
              onClick={() => {
                setFile(null);
                upload.reset();
                if (input.current) input.current.value = '';
              }}
            >
              Clear
            </Button>
          )}
        </div>
      </form>
    </Card>
  );
}

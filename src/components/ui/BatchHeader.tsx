import { batchErrorsCsvUrl, batchRawUrl } from '../../lib/api/downloads';
import { formatAge, formatBytes } from '../../lib/format';
import type { Batch } from '../../lib/api/types';
import { BatchStateBadge } from './StateBadge';

/** Filename, state, who sent it and when, and the two downloads. */
export function BatchHeader({ batch }: { batch: Batch }) {
  const checked = !['received', 'needs_mapping', 'checking'].includes(batch.state);
  return (
    <div className="flex flex-wrap items-start justify-between gap-4">
      <div className="min-w-0">
        <div className="flex flex-wrap items-center gap-3">
          <h1 className="truncate text-2xl font-semibold tracking-tight text-night" data-testid="batch-filename">
            {batch.filename}
          </h1>
          <BatchStateBadge state={batch.state} />
        </div>
        <p className="mt-1 text-sm text-muted">
          Batch {batch.id} · {formatBytes(batch.sizeBytes)} · {batch.instrument ?? 'instrument per row'} · sent by {batch.uploadedBy.name}{' '}
          <span title={new Date(batch.createdAt).toLocaleString()}>{formatAge(batch.createdAt)}</span> ·{' '}
          <span className="font-mono" title={`SHA-256 ${batch.sha256}`}>
            sha256 {batch.sha256.slice(0, 12)}…
          </span>
        </p>
      </div>
      <div className="flex gap-2">
        <a className="rounded-md border border-line bg-card px-3 py-2 text-sm text-night hover:bg-veil-soft" href={batchRawUrl(batch.id)} download>
          Raw file as received
        </a>
        {checked ? (
          <a className="rounded-md border border-line bg-card px-3 py-2 text-sm text-night hover:bg-veil-soft" href={batchErrorsCsvUrl(batch.id)} download>
            Error report (CSV)
          </a>
        ) : (
          <span className="rounded-md border border-line px-3 py-2 text-sm text-muted" title="The rows have not been checked yet">
            Error report (CSV)
          </span>
        )}
      </div>
    </div>
  );
}

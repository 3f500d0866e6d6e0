import { Link } from 'react-router-dom';
import { Card, Notice } from '../../../components/ui/primitives';
import { useBatch } from '../../../lib/api/batch';
import { useIntakeColumns } from '../api/columns';
import type { Batch } from '../types';
import { BatchCounts } from './BatchCounts';
import { BatchHeader } from '../../../components/ui/BatchHeader';
import { BatchRowsTable } from './BatchRowsTable';
import { MappingEditor } from './MappingEditor';
import { CheckProgress } from './CheckProgress';

/** One batch: its header and counts, then whatever its state calls for. */
export function BatchDetail({ id, seenBefore }: { id: number; seenBefore: boolean }) {
  const q = useBatch(id);
  if (q.isPending) return <p className="text-sm text-muted">Loading…</p>;
  if (q.error) return <Notice tone="bad">{q.error.message}</Notice>;
  const batch = q.data;
  return (
    <div className="space-y-6">
      <BatchHeader batch={batch} />
      {seenBefore && (
        <Notice>
          These exact bytes were uploaded before, so no new batch was made: this is the batch from {new Date(batch.createdAt).toLocaleString()}.
        </Notice>
      )}
      {batch.failure && (
        <Notice tone="bad">
          <span data-testid="batch-failure">{batch.failure}</span>
        </Notice>
      )}
      {!['received', 'needs_mapping', 'checking'].includes(batch.state) && <BatchCounts counts={batch.counts} />}
      <StateBody batch={batch} />
    </div>
  );
}

function StateBody({ batch }: { batch: Batch }) {
  const columns = useIntakeColumns();
  if (batch.state === 'received' || batch.state === 'checking') {
    return (
      <Card title="Checking rows">
        <CheckProgress batch={batch} />
      </Card>
    );
  }
  if (batch.state === 'needs_mapping') {
    if (!batch.proposal) return <Notice tone="bad">This batch needs a column mapping, but the server sent no proposal to start from.</Notice>;
    if (columns.error) return <Notice tone="bad">The list of Starveil columns could not be loaded: {columns.error.message}</Notice>;
    if (!columns.data) return <p className="text-sm text-muted">Loading the column list…</p>;
    return <MappingEditor key={batch.updatedAt} batch={batch} proposal={batch.proposal} columns={columns.data.columns} />;
  }
  if (batch.state === 'failed') return null;
  return (
    <Card
      title="Checked rows"
      actions={
        <Link to={`/review/batches/${batch.id}`} className="rounded-md border border-line bg-card px-3 py-1.5 text-sm text-night hover:bg-veil-soft">
          Open the measurements table →
        </Link>
      }
    >
      <BatchRowsTable batchId={batch.id} counts={batch.counts} />
    </Card>
  );
}

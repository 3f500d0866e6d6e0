import { useQueryClient } from '@tanstack/react-query';
import { useEffect, useRef, useState } from 'react';
import { Link } from 'react-router-dom';
import { Button, Card, Notice } from '../../../components/ui/primitives';
import { can } from '../../../lib/roles';
import { useMe } from '../../../lib/api/me';
import { useBatch } from '../../../lib/api/batch';
import { BatchHeader } from '../../../components/ui/BatchHeader';
import { formatAge, formatCount } from '../../../lib/format';
import { invalidateAfterDecision } from '../api/returnBatch';
import { useStateTotals } from '../api/stateTotals';
import { MEASUREMENT_STATES, type BatchDecisionAnswer } from '../types';
import { DecisionDialog, type Decision } from './DecisionDialog';
import { MeasurementsGrid } from './MeasurementsGrid';
import { MeasurementStateBadge } from '../../../components/ui/MeasurementStateBadge';

const REVIEWABLE = ['awaiting_review', 'approved', 'returned'];

/** One batch's measurements for review: state totals, the whole-batch decision, and the grid. */
export function BatchReview({ batchId }: { batchId: number }) {
  const { data: me } = useMe();
  const batch = useBatch(batchId);
  const totals = useStateTotals(batchId);
  const [decision, setDecision] = useState<Decision | null>(null);
  const [decided, setDecided] = useState<BatchDecisionAnswer | null>(null);
  const curator = can(me, ['curator']);
  // a large decision settles on the server (202, batch.settling): refresh everything once it is done
  const qc = useQueryClient();
  const settling = batch.data?.settling ?? null;
  const wasSettling = useRef(false);
  useEffect(() => {
    if (settling) wasSettling.current = true;
    else if (wasSettling.current) {
      wasSettling.current = false;
      invalidateAfterDecision(qc, batchId);
      setDecided((d) => (d && d.counts === null ? null : d)); // the header's state badge now shows the outcome
    }
  }, [settling, qc, batchId]);

  if (batch.isPending) return <p className="text-sm text-muted">Loading…</p>;
  if (batch.error) return <Notice tone="bad">{batch.error.message}</Notice>;
  const b = batch.data;
  const reviewable = REVIEWABLE.includes(b.state);

  return (
    <div className="space-y-5">
      <BatchHeader batch={b} />
      <div className="flex flex-wrap items-center justify-between gap-4">
        <dl className="flex flex-wrap gap-2" aria-label="Measurements by state">
          {MEASUREMENT_STATES.map((s) => (
            <div key={s} className="flex items-center gap-1.5 rounded-lg border border-line bg-card px-2.5 py-1.5">
              <dt>
                <MeasurementStateBadge state={s} />
              </dt>
              <dd className="num text-sm font-semibold text-night" data-testid={`total-${s}`}>
                {totals.data ? formatCount(totals.data[s]) : '…'}
              </dd>
            </div>
          ))}
        </dl>
        {curator && reviewable && (
          <div className="flex gap-2">
            <Button tone="quiet" onClick={() => setDecision('return')}>
              Return to uploader…
            </Button>
            <Button onClick={() => setDecision('approve')}>Approve batch…</Button>
          </div>
        )}
      </div>

      {!reviewable && <Notice>This batch is {b.state.replace(/_/g, ' ')}; it can be reviewed once its rows have been checked.</Notice>}
      {decided && decided.counts === null && (
        <Notice>
          <span data-testid="decision-settling">
            {decided.settling.decision === 'approved' ? 'Approving' : 'Returning'} this batch: the server applies the decision in the background
            {settling ? ` (${formatCount(settling.done)} of ${formatCount(settling.total)} measurements so far)` : ''}; this page updates when it is done.
          </span>
        </Notice>
      )}
      {decided && decided.counts !== null && (
        <Notice tone="ok">
          <span data-testid="decision-result">
            Batch {decided.state === 'approved' ? 'approved' : 'returned to its uploader'}: {formatCount(decided.counts.changed)} measurement{decided.counts.changed === 1 ? '' : 's'} {decided.state === 'approved' ? 'approved' : 'rejected'}
            {decided.counts.withdrawn ? `; ${formatCount(decided.counts.withdrawn)} approved withdrawn from the catalog` : ''}
            {decided.counts.restored ? `; ${formatCount(decided.counts.restored)} withdrawn approved again` : ''}
            {decided.counts.conflicts + decided.counts.ambiguous > 0 ? `; ${formatCount(decided.counts.conflicts)} conflicts and ${formatCount(decided.counts.ambiguous)} ambiguous matches still held` : ''}.
          </span>{' '}
          <Link to="/review" className="underline">
            Back to the queue
          </Link>
        </Notice>
      )}

      <Card>
        <MeasurementsGrid batchId={batchId} readOnly={!curator} totals={totals.data} />
      </Card>

      {curator && (
        <DecisionDialog
          batchId={batchId}
          uploader={b.uploadedBy.name}
          decision={decision}
          totals={totals.data}
          onClose={() => setDecision(null)}
          onDecided={(d) => {
            setDecision(null);
            setDecided(d);
          }}
        />
      )}
      <p className="text-xs text-muted">
        Sent {formatAge(b.createdAt)} by {b.uploadedBy.name}. <Link className="text-veil underline" to={`/batches/${b.id}`}>The intake report</Link> shows each row as it was in the file.
      </p>
    </div>
  );
}

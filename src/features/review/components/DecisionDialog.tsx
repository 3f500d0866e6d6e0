import { useState } from 'react';
import { Dialog } from '../../../components/ui/Dialog';
import { Button, Notice } from '../../../components/ui/primitives';
import { formatCount } from '../../../lib/format';
import { useApproveBatch } from '../api/approveBatch';
import { useReturnBatch } from '../api/returnBatch';
import type { BatchDecisionAnswer, MeasurementState } from '../types';

export type Decision = 'approve' | 'return';

/** Decide a whole batch, with a note to its uploader. */
export function DecisionDialog({ batchId, uploader, decision, totals, onClose, onDecided }: { batchId: number; uploader: string; decision: Decision | null; totals?: Record<MeasurementState, number>; onClose: () => void; onDecided: (d: BatchDecisionAnswer) => void }) {
  const [note, setNote] = useState('');
  const approve = useApproveBatch();
  const ret = useReturnBatch();
  const m = decision === 'return' ? ret : approve;
  const held = totals ? totals.conflict + totals.ambiguous : null;
  const close = () => {
    approve.reset();
    ret.reset();
    onClose();
  };
  const submit = () =>
    m.mutate(
      { batchId, note: note.trim() || undefined },
      {
        onSuccess: (d) => {
          setNote('');
          onDecided(d);
        },
      },
    );
  return (
    <Dialog
      open={decision !== null}
      title={decision === 'return' ? 'Return this batch to its uploader' : 'Approve this batch'}
      onClose={close}
      footer={
        <>
          <Button tone="quiet" onClick={close} disabled={m.isPending}>
            Cancel
          </Button>
          <Button tone={decision === 'return' ? 'danger' : 'primary'} onClick={submit} disabled={m.isPending}>
            {m.isPending ? 'Saving…' : decision === 'return' ? 'Return batch' : 'Approve batch'}
          </Button>
        </>
      }
    >
      <div className="space-y-3 text-sm text-ink">
        <p>
          {totals ? (
            <>
              <b className="num">{formatCount(totals.pending)}</b> pending measurement{totals.pending === 1 ? '' : 's'} will become{' '}
              <b>{decision === 'return' ? 'rejected' : 'approved'}</b>
              {decision === 'approve' ? ' and enter the catalog' : ' and stay out of the catalog'}.
            </>
          ) : (
            <>Every pending measurement will become {decision === 'return' ? 'rejected' : 'approved'}.</>
          )}{' '}
          {decision === 'return'
            ? `${totals ? `${formatCount(totals.approved)} approved` : 'Approved'} measurement${totals?.approved === 1 ? ' is' : 's are'} withdrawn from the catalog until the batch is approved again; rejected rows stay rejected.`
            : `${totals ? `${formatCount(totals.withdrawn)} withdrawn` : 'Withdrawn'} measurement${totals?.withdrawn === 1 ? ' is' : 's are'} approved again; rejected rows stay rejected.`}
        </p>
        {held !== null && held > 0 && (
          <Notice>
            {formatCount(totals!.conflict)} conflict{totals!.conflict === 1 ? '' : 's'} and {formatCount(totals!.ambiguous)} ambiguous match{totals!.ambiguous === 1 ? '' : 'es'} stay held until someone settles them.
          </Notice>
        )}
        <label className="block space-y-1">
          <span className="font-medium">Note to {uploader}</span>
          <textarea
            aria-label="Note to the uploader"
            value={note}
            maxLength={4000}
            rows={4}
            onChange={(e) => setNote(e.target.value)}
            placeholder={decision === 'return' ? 'What needs fixing before the file is sent again' : 'Optional: what you checked or changed'}
            className="w-full rounded-md border border-line bg-white px-3 py-2 text-sm outline-none focus:border-veil focus:ring-2 focus:ring-veil/30"
          />
          <span className="block text-xs text-muted">Kept with the decision and shown to the uploader.</span>
        </label>
        {m.error && <Notice tone="bad">{m.error.message}</Notice>}
      </div>
    </Dialog>
  );
}

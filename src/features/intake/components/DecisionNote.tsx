import { useRef } from 'react';
import { Link, useNavigate } from 'react-router-dom';
import { Button, Card, Notice } from '../../../components/ui/primitives';
import { useBatchDecision, useSendCorrectedFile } from '../api/decision';

const STATE_WORDS: Record<string, string> = { approved: 'approved', rejected: 'rejected', withdrawn: 'withdrawn', conflict: 'still held as conflicts', ambiguous: 'still held as ambiguous matches', pending: 'pending' };

/**
 * The curator's decision and note on the batch page, for its uploader: what was decided, why, the
 * measurements by state, and for a returned batch a way to send the corrected file.
 */
export function DecisionNote({ batchId, instrument }: { batchId: number; instrument?: string | null }) {
  const q = useBatchDecision(batchId);
  const send = useSendCorrectedFile();
  const input = useRef<HTMLInputElement>(null);
  const navigate = useNavigate();
  if (!q.data) return null;
  const d = q.data;
  if (!d.decision && !d.replaces) return null;
  return (
    <Card title={d.decision === 'returned' ? 'Returned for changes' : d.decision === 'approved' ? 'Approved' : 'Corrected file'}>
      <div className="space-y-3 text-sm" data-testid="decision-note">
        {d.decision && (
          <>
            <p className="text-muted">
              {d.reviewedBy?.name ?? 'A curator'} {d.decision === 'approved' ? 'approved' : 'returned'} this batch{d.reviewedAt ? ` on ${d.reviewedAt.slice(0, 16).replace('T', ' ')} UTC` : ''}.
            </p>
            <blockquote className="whitespace-pre-wrap rounded-md border-l-4 border-amber bg-paper px-3 py-2 text-ink" data-testid="decision-note-text">
              {d.note?.trim() ? d.note : '(no note)'}
            </blockquote>
            <p className="text-xs text-muted">
              {Object.entries(d.counts)
                .filter(([, n]) => n > 0)
                .map(([s, n]) => `${n.toLocaleString('en')} ${STATE_WORDS[s] ?? s}`)
                .join(' · ')}
            </p>
          </>
        )}
        {d.replaces && (
          <p>
            This upload corrects <Link className="text-veil underline" to={`/batches/${d.replaces.id}`}>batch {d.replaces.id} ({d.replaces.filename})</Link>.
          </p>
        )}
        {d.replacedBy.length > 0 && (
          <p>
            Corrected file{d.replacedBy.length > 1 ? 's' : ''} sent:{' '}
            {d.replacedBy.map((b, i) => (
              <span key={b.id}>
                {i > 0 ? ', ' : ''}
                <Link className="text-veil underline" to={`/batches/${b.id}`}>batch {b.id} ({b.filename})</Link>
              </span>
            ))}
          </p>
        )}
        {d.decision === 'returned' && (
          <div className="flex flex-wrap items-center gap-3">
            <input
              ref={input}
              type="file"
              accept=".csv,text/csv"
              className="hidden"
              data-testid="corrected-file"
              onChange={(e) => {
                const file = e.target.files?.[0];
                if (file) send.mutate({ returnedId: batchId, file, instrument: instrument ?? null }, { onSuccess: (r) => navigate(`/batches/${r.batchId}`) });
              }}
            />
            <Button onClick={() => input.current?.click()} disabled={send.isPending}>
              {send.isPending ? 'Sending…' : 'Send a corrected file'}
            </Button>
            <span className="text-xs text-muted">A new upload, linked to this batch.</span>
          </div>
        )}
        {send.error && <Notice tone="bad">{send.error.message}</Notice>}
      </div>
    </Card>
  );
}

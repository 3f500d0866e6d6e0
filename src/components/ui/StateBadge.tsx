import type { BatchState, RowState } from '../../lib/api/types';

const BATCH: Record<BatchState, { label: string; tone: string }> = {
  received: { label: 'Received', tone: 'bg-line text-ink' },
  needs_mapping: { label: 'Needs column mapping', tone: 'bg-amber/25 text-amber-deep ring-1 ring-amber/60' },
  checking: { label: 'Checking rows', tone: 'bg-veil/15 text-night ring-1 ring-veil/50' },
  awaiting_review: { label: 'Ready for review', tone: 'bg-night text-veil-soft' },
  failed: { label: 'Failed', tone: 'bg-bad/10 text-bad ring-1 ring-bad/40' },
  approved: { label: 'Approved', tone: 'bg-ok/10 text-ok ring-1 ring-ok/40' },
  returned: { label: 'Returned to uploader', tone: 'bg-warn/10 text-warn ring-1 ring-warn/40' },
};

export const batchStateLabel = (s: BatchState) => BATCH[s]?.label ?? s;

/**
 * A rounded state label with its tone; `working` adds a pulsing dot (the server is busy with it).
 * `testId` names what it is the state of (batch-state, run-state), for tests and styles alike.
 */
export function StatePill({ testId, state, label, tone, working }: { testId: string; state: string; label: string; tone: string; working: boolean }) {
  return (
    <span data-testid={testId} data-state={state} className={`inline-flex items-center gap-1.5 whitespace-nowrap rounded-full px-2.5 py-0.5 text-xs font-medium ${tone}`}>
      {working && <span className="h-1.5 w-1.5 animate-pulse rounded-full bg-veil" aria-hidden />}
      {label}
    </span>
  );
}

export function BatchStateBadge({ state }: { state: BatchState }) {
  const b = BATCH[state] ?? { label: state, tone: 'bg-line text-ink' };
  return <StatePill testId="batch-state" state={state} label={b.label} tone={b.tone} working={state === 'checking' || state === 'received'} />;
}

const ROW: Record<RowState, { label: string; tone: string }> = {
  accepted: { label: 'accepted', tone: 'text-ok bg-ok/10' },
  rejected: { label: 'rejected', tone: 'text-bad bg-bad/10' },
  duplicate: { label: 'duplicate', tone: 'text-muted bg-line/70' },
  conflict: { label: 'conflict', tone: 'text-warn bg-warn/10' },
  ambiguous: { label: 'ambiguous', tone: 'text-night bg-veil/15' },
};

export function RowStateBadge({ state }: { state: RowState }) {
  const r = ROW[state] ?? { label: state, tone: 'bg-line text-ink' };
  return <span className={`inline-block rounded px-1.5 py-0.5 text-xs font-medium ${r.tone}`}>{r.label}</span>;
}

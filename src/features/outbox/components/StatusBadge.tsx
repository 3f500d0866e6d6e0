import type { OutboxMessage } from '../api/outbox';

const LOOK: Record<OutboxMessage['status'], { label: string; className: string }> = {
  stored: { label: 'kept here', className: 'bg-veil-soft text-night' },
  sending: { label: 'sending', className: 'bg-amber/20 text-amber-deep' },
  sent: { label: 'delivered', className: 'bg-ok/10 text-ok' },
  failed: { label: 'failed', className: 'bg-bad/10 text-bad' },
};

/** Where a message stands: kept in the outbox only, handed to SMTP, or failed. */
export function StatusBadge({ status }: { status: OutboxMessage['status'] }) {
  const look = LOOK[status] ?? LOOK.stored;
  return <span className={`rounded-full px-2 py-0.5 text-xs font-medium ${look.className}`}>{look.label}</span>;
}

import { Notice } from '../../../components/ui/primitives';
import type { OutboxMessage } from '../api/outbox';
import { StatusBadge } from './StatusBadge';

/** The whole message as plain text, with its envelope. */
export function MessageReader({ message }: { message: OutboxMessage | undefined }) {
  if (!message) return <p className="px-2 py-8 text-center text-sm text-muted">Choose a message on the left to read it.</p>;
  return (
    <article aria-label="Message" className="space-y-4">
      <header className="space-y-1 border-b border-line pb-3">
        <h2 className="text-lg font-semibold text-night">{message.subject}</h2>
        <dl className="grid grid-cols-[auto_1fr] gap-x-3 gap-y-0.5 text-sm">
          <dt className="text-muted">From</dt>
          <dd>{message.from}</dd>
          <dt className="text-muted">To</dt>
          <dd>{message.to}</dd>
          <dt className="text-muted">Composed</dt>
          <dd className="num">{new Date(message.createdAt).toLocaleString()}</dd>
          <dt className="text-muted">Transport</dt>
          <dd className="flex items-center gap-2">
            {message.transport === 'smtp' ? 'SMTP' : 'outbox only (not sent anywhere)'} <StatusBadge status={message.status} />
          </dd>
        </dl>
      </header>
      {message.error && <Notice tone="bad">{message.error}</Notice>}
      <pre data-testid="message-text" className="whitespace-pre-wrap break-words font-sans text-sm leading-relaxed text-ink">
        {message.text}
      </pre>
    </article>
  );
}

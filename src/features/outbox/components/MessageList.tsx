import type { OutboxMessage } from '../api/outbox';
import { StatusBadge } from './StatusBadge';

/** One line per message; the selected one is highlighted. */
export function MessageList({ messages, selectedId, onSelect }: { messages: OutboxMessage[]; selectedId: number | null; onSelect: (id: number) => void }) {
  return (
    <ul aria-label="Messages" className="divide-y divide-line/70">
      {messages.map((m) => {
        const selected = m.id === selectedId;
        return (
          <li key={m.id}>
            <button
              type="button"
              aria-current={selected ? 'true' : undefined}
              onClick={() => onSelect(m.id)}
              className={`block w-full px-3 py-2.5 text-left ${selected ? 'bg-veil-soft' : 'hover:bg-veil-soft/40'}`}
            >
              <div className="flex items-center justify-between gap-3">
                <span className="truncate text-sm font-medium text-night">{m.subject}</span>
                <StatusBadge status={m.status} />
              </div>
              <div className="mt-0.5 flex justify-between gap-3 text-xs text-muted">
                <span className="truncate">to {m.to}</span>
                <time className="num whitespace-nowrap" dateTime={m.createdAt}>{new Date(m.createdAt).toLocaleString()}</time>
              </div>
            </button>
          </li>
        );
      })}
    </ul>
  );
}

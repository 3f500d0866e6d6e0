import { useState } from 'react';
import { Button, Card, Notice, PageTitle } from '../../../components/ui/primitives';
import { useOutbox } from '../api/outbox';
import { MessageList } from '../components/MessageList';
import { MessageReader } from '../components/MessageReader';

const PAGE = 50;

export function OutboxPage() {
  const [offset, setOffset] = useState(0);
  const [selectedId, setSelectedId] = useState<number | null>(null);
  const q = useOutbox({ limit: PAGE, offset });
  const messages = q.data?.messages ?? [];
  const total = q.data?.total ?? 0;
  const selected = messages.find((m) => m.id === selectedId);

  return (
    <div className="space-y-6">
      <PageTitle sub="Every e-mail Starveil has written, newest first: reset links, batch notices and their delivery.">Outbox</PageTitle>
      {q.error && <Notice tone="bad">{q.error.message}</Notice>}
      {q.isPending && <p className="text-sm text-muted">Loading…</p>}
      {q.data && total === 0 && <p className="rounded-lg border border-dashed border-line px-4 py-8 text-center text-sm text-muted">No e-mail has been written yet.</p>}
      {q.data && total > 0 && (
        <div className="grid gap-6 lg:grid-cols-[minmax(0,2fr)_minmax(0,3fr)]">
          <Card title={`${total.toLocaleString()} message${total === 1 ? '' : 's'}`}>
            <MessageList messages={messages} selectedId={selectedId} onSelect={setSelectedId} />
            {total > PAGE && (
              <div className="mt-4 flex items-center gap-3 text-sm">
                <Button tone="quiet" disabled={offset === 0} onClick={() => setOffset(Math.max(0, offset - PAGE))}>Newer</Button>
                <span className="num text-muted">{offset + 1}–{Math.min(offset + PAGE, total)} of {total.toLocaleString()}</span>
                <Button tone="quiet" disabled={offset + PAGE >= total} onClick={() => setOffset(offset + PAGE)}>Older</Button>
              </div>
            )}
          </Card>
          <Card>
            <MessageReader message={selected} />
          </Card>
        </div>
      )}
    </div>
  );
}

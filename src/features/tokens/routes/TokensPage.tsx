import { useState, type FormEvent } from 'react';
import { Button, Card, Field, Notice, PageTitle, TextInput } from '../../../components/ui/primitives';
import { useCreateToken, type CreatedToken } from '../api/createToken';
import { useRevokeToken } from '../api/revokeToken';
import { useTokens, type ApiToken } from '../api/tokens';
import { SecretOnce } from '../components/SecretOnce';
import { TokensTable } from '../components/TokensTable';

/** Personal API tokens: create one for a script, see its secret once, revoke it when done. */
export function TokensPage() {
  const tokens = useTokens();
  const create = useCreateToken();
  const revoke = useRevokeToken();
  const [name, setName] = useState('');
  const [created, setCreated] = useState<CreatedToken | null>(null);

  const submit = (e: FormEvent) => {
    e.preventDefault();
    create.mutate({ name: name.trim() }, { onSuccess: (t) => { setCreated(t); setName(''); } });
  };
  const onRevoke = (t: ApiToken) => {
    if (window.confirm(`Revoke “${t.name}”? Scripts using it stop working at once.`)) revoke.mutate(t.id);
  };

  return (
    <div className="space-y-6">
      <PageTitle sub={<>A token lets a script or notebook read the API as you, with <code className="font-mono">Authorization: Bearer …</code>. Tokens only read: uploads, edits and approvals need you signed in here.</>}>
        API tokens
      </PageTitle>
      <Card title="New token">
        {created ? (
          <SecretOnce created={created} onDone={() => setCreated(null)} />
        ) : (
          <form onSubmit={submit} className="flex flex-wrap items-end gap-3">
            <div className="min-w-64 flex-1">
              <Field label="Name" hint="What it is for, e.g. “dust model notebook”. Only you see it.">
                <TextInput required maxLength={100} value={name} onChange={(e) => setName(e.target.value)} placeholder="dust model notebook" />
              </Field>
            </div>
            <Button type="submit" disabled={create.isPending || !name.trim()}>Create token</Button>
          </form>
        )}
        {create.error && <div className="mt-3"><Notice tone="bad">{create.error.message}</Notice></div>}
      </Card>
      <Card title="Your tokens">
        {tokens.isPending && <p className="text-sm text-muted">Loading…</p>}
        {tokens.error && <Notice tone="bad">{tokens.error.message}</Notice>}
        {revoke.error && <Notice tone="bad">{revoke.error.message}</Notice>}
        {tokens.data && <TokensTable tokens={tokens.data.tokens} onRevoke={onRevoke} revoking={revoke.isPending ? (revoke.variables ?? null) : null} />}
        <p className="mt-3 text-xs text-muted">Last used is updated at most once a minute. Each token may make a limited number of requests per minute; beyond it the API answers 429 with a Retry-After header.</p>
      </Card>
    </div>
  );
}

import { useState } from 'react';
import { Button } from '../../../components/ui/primitives';
import type { CreatedToken } from '../api/createToken';

/** The new secret, shown once, with a copy button and a ready-to-paste curl line. */
export function SecretOnce({ created, onDone }: { created: CreatedToken; onDone: () => void }) {
  const [copied, setCopied] = useState<'token' | 'curl' | 'failed' | null>(null);
  const curl = `curl -H 'Authorization: Bearer ${created.token}' '${window.location.origin}/api/v1/me'`;
  const copy = async (text: string, what: 'token' | 'curl') => {
    try {
      await navigator.clipboard.writeText(text);
      setCopied(what);
    } catch {
      setCopied('failed');
    }
  };
  return (
    <div data-testid="token-secret" className="space-y-3 rounded-lg border-2 border-amber bg-amber/10 p-4">
      <p className="text-sm font-medium text-night">
        “{created.name}” is ready. Copy the secret now: Starveil keeps only a fingerprint of it and cannot show it again.
      </p>
      <div className="flex flex-wrap items-center gap-2">
        <code className="num flex-1 select-all break-all rounded-md bg-night px-3 py-2 font-mono text-sm text-amber" aria-label="New token secret">
          {created.token}
        </code>
        <Button type="button" onClick={() => copy(created.token, 'token')}>{copied === 'token' ? 'Copied' : 'Copy secret'}</Button>
      </div>
      <div className="flex flex-wrap items-center gap-2">
        <code className="flex-1 break-all rounded-md border border-line bg-white px-3 py-1.5 font-mono text-xs text-ink">{curl}</code>
        <Button type="button" tone="quiet" onClick={() => copy(curl, 'curl')}>{copied === 'curl' ? 'Copied' : 'Copy curl line'}</Button>
      </div>
      {copied === 'failed' && <p role="alert" className="text-xs text-bad">The browser refused the clipboard; select the secret and copy it by hand.</p>}
      <Button type="button" tone="quiet" onClick={onDone}>I have stored it</Button>
    </div>
  );
}

import { Button } from '../../../components/ui/primitives';
import type { ApiToken } from '../api/tokens';

const when = (iso: string | null) => (iso ? new Date(iso).toLocaleString() : '—');

export function TokensTable({ tokens, onRevoke, revoking }: { tokens: ApiToken[]; onRevoke: (t: ApiToken) => void; revoking: number | null }) {
  if (!tokens.length) return <p className="text-sm text-muted">You have no tokens yet.</p>;
  return (
    <table className="w-full text-left text-sm" data-testid="tokens-table">
      <thead className="border-b border-line text-xs uppercase tracking-wide text-muted">
        <tr><th className="py-2">Name</th><th>Created</th><th>Last used</th><th>State</th><th /></tr>
      </thead>
      <tbody>
        {tokens.map((t) => (
          <tr key={t.id} className={`border-b border-line/60 ${t.revokedAt ? 'text-muted' : ''}`}>
            <td className="py-2 font-medium">{t.name}</td>
            <td className="num">{when(t.createdAt)}</td>
            <td className="num">{t.lastUsedAt ? when(t.lastUsedAt) : 'never'}</td>
            <td>{t.revokedAt ? <span>revoked {when(t.revokedAt)}</span> : <span className="rounded-full bg-ok/10 px-2 py-0.5 text-xs font-medium text-ok">active</span>}</td>
            <td className="text-right">
              {!t.revokedAt && (
                <Button tone="danger" disabled={revoking === t.id} onClick={() => onRevoke(t)} aria-label={`Revoke ${t.name}`}>
                  Revoke
                </Button>
              )}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

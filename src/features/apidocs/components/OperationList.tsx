import type { HttpMethod, OpenApiDocument } from '../api/openapiDocument';

const METHODS: HttpMethod[] = ['get', 'post', 'patch', 'put', 'delete'];
const METHOD_TONE: Record<HttpMethod, string> = {
  get: 'bg-veil-soft text-night',
  post: 'bg-amber/20 text-amber-deep',
  patch: 'bg-amber/20 text-amber-deep',
  put: 'bg-amber/20 text-amber-deep',
  delete: 'bg-bad/10 text-bad',
};

interface Row {
  method: HttpMethod;
  path: string;
  summary: string;
  roles: string[];
}

/** Operations of the document grouped by tag, in the document's tag order. */
export function groupOperations(doc: OpenApiDocument): { tag: string; description?: string; rows: Row[] }[] {
  const groups = new Map<string, Row[]>();
  for (const [path, item] of Object.entries(doc.paths)) {
    for (const method of METHODS) {
      const op = item[method];
      if (!op) continue;
      const tag = op.tags?.[0] ?? 'Other';
      groups.set(tag, [...(groups.get(tag) ?? []), { method, path, summary: op.summary ?? '', roles: op['x-roles'] ?? [] }]);
    }
  }
  const order = (doc.tags ?? []).map((t) => t.name);
  return [...groups.entries()]
    .sort(([a], [b]) => (order.indexOf(a) + 1 || 999) - (order.indexOf(b) + 1 || 999))
    .map(([tag, rows]) => ({ tag, description: doc.tags?.find((t) => t.name === tag)?.description, rows }));
}

const rolesText = (roles: string[]) => (roles.includes('anyone') ? 'anyone' : roles.length === 4 ? 'signed in' : roles.filter((r) => r !== 'admin').join(', '));

export function OperationList({ doc }: { doc: OpenApiDocument }) {
  return (
    <div className="space-y-6">
      {groupOperations(doc).map((g) => (
        <section key={g.tag}>
          <h3 className="text-sm font-semibold text-night">{g.tag}</h3>
          {g.description && <p className="text-xs text-muted">{g.description}</p>}
          <table className="mt-2 w-full table-fixed text-sm">
            <colgroup>
              <col className="w-20" />
              <col className="w-[38%]" />
              <col />
              <col className="w-36" />
            </colgroup>
            <tbody>
              {g.rows.map((r) => (
                <tr key={`${r.method} ${r.path}`} className="border-t border-line align-top">
                  <td className="py-1.5 pr-2">
                    <span className={`inline-block rounded px-1.5 py-0.5 font-mono text-xs uppercase ${METHOD_TONE[r.method]}`}>{r.method}</span>
                  </td>
                  <td className="py-1.5 pr-4 font-mono text-xs break-all text-ink">/api/v1{r.path}</td>
                  <td className="py-1.5 pr-4 text-ink">{r.summary}</td>
                  <td className="py-1.5 text-right text-xs text-muted">{rolesText(r.roles)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      ))}
    </div>
  );
}

import { Link } from 'react-router-dom';
import { Card, Notice, PageTitle } from '../../../components/ui/primitives';
import { useOpenApiDocument } from '../api/openapiDocument';
import { OperationList } from '../components/OperationList';

export function ApiPage() {
  const q = useOpenApiDocument();
  return (
    <div className="space-y-6">
      <PageTitle sub="Everything the app shows is also an HTTP API, described by an OpenAPI 3.1 document.">API</PageTitle>
      <div className="grid gap-4 md:grid-cols-2">
        <Card title="Reference">
          <ul className="space-y-2 text-sm text-ink">
            <li>
              {/* served by the API server, outside this app's pages */}
              <a className="font-medium text-veil underline" href="/api/docs">Open the API reference</a> — every route with its parameters, units, request and response schemas; try calls while signed in.
            </li>
            <li>
              <a className="font-medium text-veil underline" href="/api/v1/openapi.json">openapi.json</a> — the same as a machine-readable document for code generators and clients.
            </li>
          </ul>
        </Card>
        <Card title="Calling it from a script">
          <ul className="space-y-2 text-sm text-ink">
            <li>Base path <code className="font-mono text-xs">/api/v1</code>, JSON in and out.</li>
            <li>
              Create a personal token on the <Link className="text-veil underline" to="/tokens">Tokens</Link> page and send it as <code className="font-mono text-xs">Authorization: Bearer sv_…</code>. Tokens only read.
            </li>
            <li>Stokes q, u are fractions; angles degrees, IAU convention (north through east); distances pc; parallaxes mas.</li>
            <li>Starlight polarization is parallel to the plane-of-sky magnetic field; dust emission is perpendicular to it: add 90° to a layer angle before comparing it with an emission map.</li>
          </ul>
        </Card>
      </div>
      <Card title={q.data ? `${q.data.info.title} ${q.data.info.version} — operations` : 'Operations'}>
        {q.error && <Notice tone="bad">{q.error.message}</Notice>}
        {q.isPending && <p className="text-sm text-muted">Loading…</p>}
        {q.data && <OperationList doc={q.data} />}
      </Card>
    </div>
  );
}

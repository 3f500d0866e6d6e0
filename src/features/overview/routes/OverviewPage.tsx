import { Link } from 'react-router-dom';
import { Card, Notice, PageTitle } from '../../../components/ui/primitives';
import { useMe } from '../../../lib/api/me';
import { useOverview } from '../api/overview';

const ROLE_INTRO: Record<string, string> = {
  observer: 'Upload your nights as CSV batches and follow them through review.',
  curator: 'Review incoming batches, correct entries, approve them and run tomography.',
  modeler: 'Read approved layers and download sky masks, in the app or through the API.',
  admin: 'Manage accounts and roles; every other power is yours too.',
};

export function OverviewPage() {
  const { data: me } = useMe();
  const q = useOverview();
  return (
    <div className="space-y-6">
      <PageTitle sub={me ? ROLE_INTRO[me.role] : undefined}>{q.data?.survey ?? 'Overview'}</PageTitle>
      {q.error && <Notice tone="bad">{q.error.message}</Notice>}
      {q.data?.todo && (
        <Card title="Waiting for you">
          {q.data.todo.length === 0 ? (
            <p className="text-sm text-muted" data-testid="todo-empty">Nothing waits for you right now.</p>
          ) : (
            <ul className="space-y-2" data-testid="todo">
              {q.data.todo.map((t) => (
                <li key={t.kind} className="flex items-baseline gap-3">
                  <span className="min-w-[2.5rem] text-right text-xl font-semibold text-night">{t.count.toLocaleString('en')}</span>
                  <Link to={t.link} className="text-sm text-veil underline-offset-2 hover:underline" data-kind={t.kind}>
                    {t.text.replace(/^\d[\d,]*\s/, '')}
                  </Link>
                </li>
              ))}
            </ul>
          )}
        </Card>
      )}
      {q.data && (
        <div className="grid gap-4 md:grid-cols-3">
          <Card title="Catalog">
            <div className="text-3xl font-semibold text-night" data-testid="star-count">{q.data.counts.stars.toLocaleString('en')}</div>
            <div className="text-sm text-muted">stars with positions and parallaxes</div>
          </Card>
          <Card title="Instruments">
            <ul className="space-y-2 text-sm">
              {q.data.instruments.map((i) => (
                <li key={i.code}>
                  <span className="font-medium text-night">{i.code}</span> — {i.name}{' '}
                  <span className="text-muted">({i.bands.join(', ')} band)</span>
                </li>
              ))}
            </ul>
          </Card>
          <Card title="Conventions">
            <ul className="space-y-1 text-sm text-ink">
              <li>Stokes q, u as fractions (not percent)</li>
              <li>Angles in degrees, IAU convention: north through east, in [0°, 180°)</li>
              <li>Positions ICRS; Galactic l, b derived</li>
              <li>Parallaxes in mas, zero point +0.017 mas applied</li>
            </ul>
          </Card>
        </div>
      )}
    </div>
  );
}

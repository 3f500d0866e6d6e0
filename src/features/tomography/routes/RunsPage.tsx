import { Card, Notice, PageTitle } from '../../../components/ui/primitives';
import { can } from '../../../lib/roles';
import { useMe } from '../../../lib/api/me';
import { useRuns } from '../api/runs';
import { RunsTable } from '../components/RunsTable';
import { StartRunForm } from '../components/StartRunForm';

export function RunsPage() {
  const { data: me } = useMe();
  const runs = useRuns();
  const mayControl = can(me, ['curator']);
  return (
    <div className="space-y-6">
      <PageTitle sub="Each run splits every sky cell’s distance-ordered stars into dust layers, from the approved catalog as it stood when the run began. The fingerprint identifies the parameters and every measurement used.">
        Tomography runs
      </PageTitle>
      {mayControl && (
        <Card title="Start a run">
          <StartRunForm />
        </Card>
      )}
      <Card title="Runs">
        {runs.error && <Notice tone="bad">{runs.error.message}</Notice>}
        {runs.isPending && <p className="text-sm text-muted">Loading…</p>}
        {runs.data && <RunsTable runs={runs.data.runs} mayControl={mayControl} />}
      </Card>
    </div>
  );
}

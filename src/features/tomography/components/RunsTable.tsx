import { Link } from 'react-router-dom';
import { Button, Notice } from '../../../components/ui/primitives';
import { cols, DataTable } from '../../../components/ui/Table';
import { formatAge, formatCount } from '../../../lib/format';
import { useCancelRun } from '../api/cancelRun';
import { useRun } from '../api/run';
import { shortFingerprint } from '../sky/format';
import { WORKING_RUN_STATES, type Run } from '../types';
import { RunProgress } from './RunProgress';
import { RunStateBadge } from './RunStateBadge';

function Params({ p }: { p: Run['params'] }) {
  return (
    <div className="num space-y-0.5 text-xs">
      <div className="text-sm text-ink">
        NSIDE {p.nside} · {p.coordsys === 'G' ? 'Galactic' : 'equatorial'} · {p.band} band
      </div>
      <div className="text-muted">
        ≥ {p.minStars} stars/cell · {p.draws} draws · jump &gt; {p.jumpThresholdDeg}° · ≥ {p.minSegmentLength} stars/segment
      </div>
      <div className="text-muted">{p.region ? `cone r = ${p.region.radius}° at RA ${p.region.ra}°, Dec ${p.region.dec}°` : 'whole catalog'}</div>
    </div>
  );
}

function RunRow({ listed, mayControl }: { listed: Run; mayControl: boolean }) {
  const working = WORKING_RUN_STATES.includes(listed.state);
  const polled = useRun(listed.id, listed, working);
  const run = working ? (polled.data ?? listed) : listed;
  const stillWorking = WORKING_RUN_STATES.includes(run.state);
  const cancel = useCancelRun();
  return (
    <>
      <tr className={`align-top ${stillWorking ? '' : 'border-b border-line/60'}`} data-testid="run-row" data-run={run.id} data-state={run.state}>
        <td className="py-2.5 pr-4">
          <div className="font-medium text-night">Run {run.id}</div>
          <div className="text-xs text-muted" title={new Date(run.createdAt).toLocaleString()}>
            {formatAge(run.createdAt)}
          </div>
        </td>
        <td className="py-2.5 pr-4">
          <RunStateBadge state={run.state} />
          {run.error && <div className="mt-1 max-w-48 text-xs text-bad">{run.error}</div>}
        </td>
        <td className="py-2.5 pr-4">
          <Params p={run.params} />
        </td>
        <td className="py-2.5 pr-4">
          <code className="text-xs" title={run.fingerprint ?? 'not gathered yet'} data-testid="run-fingerprint">
            {shortFingerprint(run.fingerprint)}
          </code>
        </td>
        <td className="num py-2.5 pr-4 text-right" data-testid="run-stars">
          {formatCount(run.starsUsed)}
          <div className="text-xs text-muted">{run.measurementsUsed == null ? '' : `${formatCount(run.measurementsUsed)} measurements`}</div>
        </td>
        <td className="num py-2.5 pr-4 text-right" data-testid="run-cells">
          {run.progress.cellsTotal ? `${formatCount(run.progress.cellsDone)} / ${formatCount(run.progress.cellsTotal)}` : '—'}
        </td>
        <td className="py-2.5 text-right">
          {run.state === 'done' && (
            <Link to={`/sky?run=${run.id}`} className="text-sm text-veil underline-offset-2 hover:underline">
              Open the map
            </Link>
          )}
          {stillWorking && mayControl && (
            <Button tone="quiet" disabled={cancel.isPending} onClick={() => cancel.mutate(run.id)} aria-label={`Cancel run ${run.id}`}>
              Cancel
            </Button>
          )}
        </td>
      </tr>
      {stillWorking && (
        <tr className="border-b border-line/60">
          <td colSpan={7} className="pb-3 pr-2">
            <RunProgress run={run} />
          </td>
        </tr>
      )}
      {cancel.error && (
        <tr>
          <td colSpan={7} className="pb-3">
            <Notice tone="bad">{cancel.error.message}</Notice>
          </td>
        </tr>
      )}
    </>
  );
}

/** Every run, newest first, with its parameters and the data it used; working runs show their progress. */
export function RunsTable({ runs, mayControl }: { runs: Run[]; mayControl: boolean }) {
  if (runs.length === 0) return <p className="rounded-lg border border-dashed border-line px-4 py-8 text-center text-sm text-muted">No tomography run yet.</p>;
  return (
    <DataTable
      label="Tomography runs"
      columns={[
        { label: 'Run', className: 'py-2 pr-4 font-medium' },
        ...cols('pr-4 font-medium', 'State', 'Parameters', 'Fingerprint'),
        ...cols('pr-4 text-right font-medium', 'Stars used', 'Cells'),
        {},
      ]}
    >
      {runs.map((r) => (
        <RunRow key={r.id} listed={r} mayControl={mayControl} />
      ))}
    </DataTable>
  );
}

import { Link, useNavigate, useSearchParams } from 'react-router-dom';
import { Card, Notice, PageTitle } from '../../../components/ui/primitives';
import { formatCount } from '../../../lib/format';
import { latestFinished, useRuns } from '../api/runs';
import { useRunCells } from '../api/cells';
import { RunPicker } from '../components/RunPicker';
import { Segmented } from '../components/Segmented';
import { SkyLegend } from '../components/SkyLegend';
import { SkyMap, type ColourBy } from '../components/SkyMap';
import { frameName, shortFingerprint } from '../sky/format';
import type { CoordSys } from '../types';

const FRAMES = [
  { value: 'G', label: 'Galactic' },
  { value: 'C', label: 'Equatorial' },
] as const;
const COLOURS = [
  { value: 'layers', label: 'Number of layers' },
  { value: 'jump', label: 'Largest jump' },
] as const;

export function SkyPage() {
  const [params, setParams] = useSearchParams();
  const navigate = useNavigate();
  const runs = useRuns();
  const asked = Number(params.get('run')) || undefined;
  const runId = asked ?? latestFinished(runs.data?.runs)?.id;
  const cells = useRunCells(runId);
  const mapFrame: CoordSys = params.get('frame') === 'C' ? 'C' : 'G';
  const colourBy: ColourBy = params.get('colour') === 'jump' ? 'jump' : 'layers';
  const set = (key: string, value: string) =>
    setParams(
      (p) => {
        const next = new URLSearchParams(p);
        next.set(key, value);
        return next;
      },
      { replace: true },
    );
  const run = cells.data?.run;

  return (
    <div className="space-y-6">
      <PageTitle sub="Every cell of a tomography run on the whole sky: how many dust layers lie along each sightline, or how far the field angle turns between them. Hover a cell to name it; click it to open its sightline.">
        Sky
      </PageTitle>
      {runs.error && <Notice tone="bad">{runs.error.message}</Notice>}
      {runs.data && !runId && (
        <Notice>
          No tomography run has finished yet. <Link className="text-veil underline" to="/runs">See the runs</Link>.
        </Notice>
      )}
      {runs.data && runId && (
        <Card>
          <div className="mb-4 flex flex-wrap items-center gap-x-6 gap-y-3">
            <RunPicker runs={runs.data.runs} value={runId} onChange={(id) => set('run', String(id))} />
            <Segmented label="Frame" value={mapFrame} options={FRAMES} onChange={(v) => set('frame', v)} />
            <Segmented label="Colour" value={colourBy} options={COLOURS} onChange={(v) => set('colour', v)} />
          </div>
          {cells.error && <Notice tone="bad">{cells.error.message}</Notice>}
          {cells.isPending && <p className="py-24 text-center text-sm text-muted">Loading the cells…</p>}
          {cells.data && run && (
            <div className="space-y-4">
              <p className="num text-sm text-ink" data-testid="run-summary">
                {formatCount(cells.data.cells.length)} cells at NSIDE {run.params.nside} ({frameName(run.params.coordsys)} pixels) · {run.params.band} band ·{' '}
                {formatCount(run.starsUsed)} stars, at least {run.params.minStars} per cell · {run.params.draws} distance draws · fingerprint{' '}
                <code title={run.fingerprint ?? undefined}>{shortFingerprint(run.fingerprint)}</code>
                {run.params.region && ` · cone of ${run.params.region.radius}° around RA ${run.params.region.ra}°, Dec ${run.params.region.dec}°`}
              </p>
              <SkyMap
                cells={cells.data.cells}
                nside={run.params.nside}
                runFrame={run.params.coordsys}
                mapFrame={mapFrame}
                colourBy={colourBy}
                onOpen={(c) => navigate(`/sky/${run.params.nside}/${c.ipix}?run=${run.id}`)}
              />
              <SkyLegend cells={cells.data.cells} colourBy={colourBy} jumpThresholdDeg={run.params.jumpThresholdDeg} />
            </div>
          )}
        </Card>
      )}
    </div>
  );
}

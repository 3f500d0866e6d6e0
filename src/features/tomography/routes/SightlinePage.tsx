import { Link, useParams, useSearchParams } from 'react-router-dom';
import { Card, Notice, PageTitle } from '../../../components/ui/primitives';
import { npixForNside } from '@science/healpix';
import { useSightline } from '../api/sightline';
import { AngleNote } from '../components/AngleNote';
import { LayerSupport } from '../components/LayerSupport';
import { JumpsTable, LayersTable } from '../components/LayersTable';
import { SightlineCharts } from '../components/SightlineCharts';
import { deg, frameName, shortFingerprint } from '../sky/format';
import { NSIDES } from '../types';

function pixelArgs(nsideText?: string, ipixText?: string): { nside: number; ipix: number } | string {
  const nside = Number(nsideText);
  const ipix = Number(ipixText);
  if (!(NSIDES as readonly number[]).includes(nside)) return `“${nsideText}” is not an NSIDE Starveil uses (${NSIDES.join(', ')}).`;
  if (!Number.isInteger(ipix) || ipix < 0 || ipix >= npixForNside(nside)) return `“${ipixText}” is not a pixel at NSIDE ${nside} (0 to ${npixForNside(nside) - 1}).`;
  return { nside, ipix };
}

export function SightlinePage() {
  const { nside: nsideText, ipix: ipixText } = useParams();
  const [search] = useSearchParams();
  const run = Number(search.get('run')) || undefined;
  const args = pixelArgs(nsideText, ipixText);
  const ok = typeof args !== 'string';
  const q = useSightline({ nside: ok ? args.nside : 32, ipix: ok ? args.ipix : 0, run }, ok);
  const cell = q.data?.cells[0];
  const params = q.data?.run.params;
  const back = `/sky${run ? `?run=${run}` : ''}`;

  return (
    <div className="space-y-6">
      <Link to={back} className="text-sm text-veil underline-offset-2 hover:underline">
        ← Sky map
      </Link>
      {!ok && <Notice tone="bad">{args}</Notice>}
      {q.error && <Notice tone="bad">{q.error.message}</Notice>}
      {ok && q.isPending && <p className="text-sm text-muted">Loading the sightline…</p>}
      {q.data && !cell && (
        <Notice>
          Run {q.data.run.id} has no cell {ok && args.ipix} at NSIDE {ok && args.nside}: too few stars there, or outside the run’s region.
        </Notice>
      )}
      {cell && params && q.data && (
        <>
          <PageTitle
            sub={
              <span className="num">
                {params.coordsys === 'G' ? `l ${deg(cell.centre.lonDeg)}, b ${deg(cell.centre.latDeg, 2, true)} · ` : ''}RA {deg(cell.centre.raDeg)}, Dec {deg(cell.centre.decDeg, 2, true)} (ICRS) · run {q.data.run.id}, {params.band} band,{' '}
                {frameName(params.coordsys)} angles · fingerprint <code title={q.data.run.fingerprint ?? undefined}>{shortFingerprint(q.data.run.fingerprint)}</code>
              </span>
            }
          >
            Sightline {cell.ipix} <span className="text-lg font-normal text-muted">· NSIDE {cell.nside}, nested</span>
          </PageTitle>

          <div className="grid gap-4 md:grid-cols-4">
            <Card title="Stars">
              <div className="num text-2xl font-semibold text-night">{cell.nStars}</div>
              <div className="text-xs text-muted">in the cell, ordered by distance</div>
            </Card>
            <Card title="Layers">
              <div className="num text-2xl font-semibold text-night" data-testid="layer-count">
                {cell.nLayers}
              </div>
              <div className="text-xs text-muted">{cell.clearForeground ? 'nearest stars unpolarized' : 'the nearest stars are already polarized'}</div>
            </Card>
            <Card title="Layer count support">
              <LayerSupport sightline={cell} />
            </Card>
            <Card title="Single-layer model">
              <div className={`text-lg font-semibold ${cell.complex ? 'text-bad' : 'text-ok'}`} data-testid="complex-flag">
                {cell.complex ? 'fails: complex' : 'holds'}
              </div>
              <div className="text-xs text-muted">complex: two layers with p/σp ≥ 3 and a jump above {params.jumpThresholdDeg}°</div>
            </Card>
          </div>

          <SightlineCharts sightline={cell} frame={params.coordsys} />

          <Card title="Layers">
            <LayersTable layers={cell.layers} />
          </Card>
          <div className="grid gap-6 lg:grid-cols-2">
            <Card title="Angle jumps">
              <JumpsTable jumps={cell.jumps} thresholdDeg={params.jumpThresholdDeg} />
            </Card>
            <Card title="Reading the angles">
              <AngleNote frame={params.coordsys} />
            </Card>
          </div>
        </>
      )}
    </div>
  );
}

import { useState } from 'react';
import { Link } from 'react-router-dom';
import { Button, Card, Notice, TextInput } from '../../../components/ui/primitives';
import { can } from '../../../lib/roles';
import { useMe } from '../../../lib/api/me';
import { useApplyCalibration } from '../api/applyCalibration';
import { useBatchCalibration } from '../api/batchCalibration';
import { useRevertCalibration } from '../api/revertCalibration';
import type { CalibrationGroup } from '../types';
import { ResidualsPlot } from './ResidualsPlot';

const pct = (x: number | null, d = 3) => (x === null ? '—' : `${(x * 100).toFixed(d)} %`);
const deg = (x: number | null, d = 2) => (x === null ? '—' : `${x.toFixed(d)}°`);

function GroupCard({ g }: { g: CalibrationGroup }) {
  return (
    <div className="space-y-3 rounded-lg border border-line p-4" data-testid="calibration-group">
      <div className="flex flex-wrap items-baseline gap-x-6 gap-y-1">
        <h3 className="font-semibold text-night">
          {g.instrument} · {g.band} band · night of {g.night ?? '(no epoch)'}
        </h3>
        <span className="text-xs text-muted">
          {g.nPolarized} polarized, {g.nUnpolarized} unpolarized standard{g.nUnpolarized === 1 ? '' : 's'} · {g.rows} rows in this night
          {g.state === 'applied' && g.appliedAt ? ` · applied ${g.appliedAt.slice(0, 16).replace('T', ' ')} UTC by ${g.appliedBy?.name ?? '?'}` : ''}
          {g.state === 'applying' || g.state === 'reverting' ? ` · being ${g.state === 'applying' ? 'applied' : 'reverted'} now (values part-way; reload in a moment)` : ''}
        </span>
      </div>
      <dl className="grid grid-cols-1 gap-3 text-sm sm:grid-cols-3">
        <div>
          <dt className="text-xs text-muted">Angle zero-point (subtracted from every angle)</dt>
          <dd className="text-lg font-semibold text-night" data-testid="zero-point">
            {g.zeroPointDeg === null ? '— (no polarized standard)' : `${deg(g.zeroPointDeg)} ± ${deg(g.zeroPointErrDeg)}`}
          </dd>
        </div>
        <div>
          <dt className="text-xs text-muted">Instrumental q</dt>
          <dd className="text-lg font-semibold text-night" data-testid="instrumental-q">
            {g.instrumentalQ === null ? '— (no unpolarized standard)' : `${pct(g.instrumentalQ)} ± ${pct(g.instrumentalQErr)}`}
          </dd>
        </div>
        <div>
          <dt className="text-xs text-muted">Instrumental u</dt>
          <dd className="text-lg font-semibold text-night" data-testid="instrumental-u">
            {g.instrumentalU === null ? '—' : `${pct(g.instrumentalU)} ± ${pct(g.instrumentalUErr)}`}
          </dd>
        </div>
      </dl>
      <ResidualsPlot group={g} />
      <div className="overflow-x-auto">
        <table className="min-w-full text-xs">
          <thead className="text-left text-muted">
            <tr>
              <th className="py-1 pr-3">line</th>
              <th className="pr-3">standard</th>
              <th className="pr-3">kind</th>
              <th className="pr-3">p ref</th>
              <th className="pr-3">θ ref</th>
              <th className="pr-3">p obs</th>
              <th className="pr-3">θ obs</th>
              <th className="pr-3">θ obs − ref</th>
              <th className="pr-3">residual</th>
              <th className="pr-3">source</th>
            </tr>
          </thead>
          <tbody>
            {g.standards.map((s) => (
              <tr key={s.measurementId} className={`border-t border-line ${s.used ? '' : 'text-muted'}`}>
                <td className="py-1 pr-3">{s.line}</td>
                <td className="pr-3">
                  {s.standardName}
                  {s.name !== s.standardName ? <span className="text-muted"> (“{s.name}”, by {s.matchedBy})</span> : null}
                  {s.note ? <div className="text-muted">{s.note}</div> : null}
                </td>
                <td className="pr-3">{s.kind}</td>
                <td className="pr-3">{pct(s.pRef, 2)}</td>
                <td className="pr-3">{deg(s.thetaRefDeg, 1)}</td>
                <td className="pr-3">{pct(s.pObs, 2)}</td>
                <td className="pr-3">{deg(s.thetaObsDeg)} ± {deg(s.thetaObsErrDeg)}</td>
                <td className="pr-3">{deg(s.offsetDeg)}</td>
                <td className="pr-3">{s.kind === 'polarized' ? deg(s.residualDeg) : `q ${pct(s.qResidual)}, u ${pct(s.uResidual)}`}</td>
                <td className="pr-3 text-muted">{s.source}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}

/**
 * The batch's calibration from its standard-star rows: zero-point, instrumental polarization, residuals,
 * and for curators the one-time apply (and its revert).
 */
export function CalibrationPanel({ batchId }: { batchId: number }) {
  const { data: me } = useMe();
  const q = useBatchCalibration(batchId);
  const apply = useApplyCalibration();
  const revert = useRevertCalibration();
  const [reason, setReason] = useState('');
  const curator = can(me, ['curator']);
  if (q.isPending) return null;
  if (q.error) return <Notice tone="bad">{q.error.message}</Notice>;
  const c = q.data;
  if (!c.calibrations.length) return null; // no standard stars in this batch
  const error = apply.error ?? revert.error;
  return (
    <Card
      title={c.applied ? 'Calibration (applied)' : 'Calibration from standard stars'}
      actions={<Link to="/calibration/standards" className="text-sm text-veil underline-offset-2 hover:underline">Standard stars</Link>}
    >
      <div className="space-y-4" data-testid="calibration-panel">
        <p className="text-sm text-muted">
          Instrumental (q, u): weighted mean of the unpolarized standards. Zero-point: axial weighted mean of θ_obs − θ_ref of the polarized standards after
          the instrumental (q, u) is subtracted. Applying subtracts the instrumental (q, u) from every row of that instrument, band and night, then rotates
          its angle by −zero-point; the values before are kept and every row is audited.
          {c.uncalibratedRows > 0 ? ` ${c.uncalibratedRows} row${c.uncalibratedRows === 1 ? '' : 's'} of nights without standards stay as they are.` : ''}
        </p>
        {c.calibrations.map((g) => (
          <GroupCard key={`${g.instrument}|${g.band}|${g.night}`} g={g} />
        ))}
        {error && <Notice tone="bad">{error.message}</Notice>}
        {apply.data && <Notice tone="ok">Calibrated {apply.data.rowsCalibrated} rows.</Notice>}
        {revert.data && <Notice tone="ok">Restored {revert.data.rowsRestored} rows to their values before the calibration.</Notice>}
        {curator && (
          <div className="flex flex-wrap items-end gap-3">
            <label className="min-w-[16rem] flex-1 text-sm">
              <span className="text-xs text-muted">Reason (kept in the audit trail)</span>
              <TextInput value={reason} onChange={(e) => setReason(e.target.value)} placeholder="e.g. night calibration from the standards" />
            </label>
            {c.applied ? (
              <Button tone="quiet" disabled={revert.isPending} onClick={() => revert.mutate({ batchId, reason: reason || undefined })} data-testid="revert-calibration">
                Revert the calibration
              </Button>
            ) : (
              <Button disabled={apply.isPending} onClick={() => apply.mutate({ batchId, reason: reason || undefined })} data-testid="apply-calibration">
                Apply to {c.calibrations.reduce((n, g) => n + g.rows, 0)} rows
              </Button>
            )}
          </div>
        )}
      </div>
    </Card>
  );
}

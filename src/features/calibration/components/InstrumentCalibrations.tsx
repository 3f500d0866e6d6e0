import { Link } from 'react-router-dom';
import { Notice } from '../../../components/ui/primitives';
import { useInstrumentCalibrations } from '../api/instrumentCalibrations';

const pct = (x: number | null) => (x === null ? '—' : `${(x * 100).toFixed(3)} %`);

/** An instrument's calibrations, newest first: zero-point and instrumental polarization over time. */
export function InstrumentCalibrations({ code }: { code: string }) {
  const q = useInstrumentCalibrations(code);
  if (q.isPending) return <p className="text-sm text-muted">Loading calibrations…</p>;
  if (q.error) return <Notice tone="bad">{q.error.message}</Notice>;
  if (!q.data.calibrations.length) return <p className="text-sm text-muted">No calibration has been applied to {code} yet.</p>;
  return (
    <table className="min-w-full text-sm" data-testid={`calibrations-${code}`}>
      <thead className="text-left text-xs text-muted">
        <tr>
          <th className="py-1 pr-3">night</th>
          <th className="pr-3">band</th>
          <th className="pr-3">zero-point</th>
          <th className="pr-3">instrumental q</th>
          <th className="pr-3">instrumental u</th>
          <th className="pr-3">standards</th>
          <th className="pr-3">batch</th>
          <th className="pr-3">state</th>
        </tr>
      </thead>
      <tbody>
        {q.data.calibrations.map((c) => (
          <tr key={c.id} className="border-t border-line">
            <td className="py-1 pr-3">{c.night ?? '—'}</td>
            <td className="pr-3">{c.band}</td>
            <td className="pr-3">{c.zeroPointDeg === null ? '—' : `${c.zeroPointDeg.toFixed(2)}° ± ${c.zeroPointErrDeg?.toFixed(2)}°`}</td>
            <td className="pr-3">{pct(c.instrumentalQ)}</td>
            <td className="pr-3">{pct(c.instrumentalU)}</td>
            <td className="pr-3">{c.nPolarized} pol. / {c.nUnpolarized} unpol.</td>
            <td className="pr-3"><Link className="text-veil underline" to={`/review/batches/${c.batchId}`}>{c.filename}</Link></td>
            <td className="pr-3" title={c.failureReason ?? undefined}>{c.state === 'applied' ? `applied ${c.appliedAt?.slice(0, 10)}` : c.state === 'reverted' ? `reverted ${c.revertedAt?.slice(0, 10)}` : c.state === 'failed' ? `failed ${c.appliedAt?.slice(0, 10)} (rolled back)` : `${c.state} now`}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

import type { ComponentProps } from 'react';
import { Link } from 'react-router-dom';
import { Card } from '../../../components/ui/primitives';
import { cols, DataTable } from '../../../components/ui/Table';
import { can, type Me } from '../../../lib/roles';
import { fixed, formatCount } from '../../../lib/format';
import { MeasurementStateBadge } from '../../../components/ui/MeasurementStateBadge';
import { INCONSISTENT_TAIL_PROBABILITY } from '@science/combine';
import type { CombinedValue, StarDetail } from '../types';
import { BAND_COLOURS, EpochPlots, QuPlanePlot } from './StarPlots';

/** This page's tables: one line a row, numbers in the monospaced figures. */
const StarTable = (props: Omit<ComponentProps<typeof DataTable>, 'className' | 'bodyClassName'>) => <DataTable className="w-full whitespace-nowrap text-left text-sm" bodyClassName="num font-mono text-[13px]" {...props} />;
const RIGHT = 'pr-3 text-right font-medium';

const pm = (v: number, e: number, d: number) => `${fixed(v, d)} ± ${fixed(e, d)}`;

/** A probability as text that stays readable when it is tiny. */
export function formatProbability(p: number): string {
  if (!Number.isFinite(p)) return '—';
  if (p >= 0.01) return p.toFixed(3);
  if (p === 0) return '< 1e-300';
  return p.toExponential(1);
}

function Fact({ label, children }: { label: string; children: React.ReactNode }) {
  return (
    <div>
      <dt className="text-xs text-muted">{label}</dt>
      <dd className="num mt-0.5 font-mono text-sm text-night">{children}</dd>
    </div>
  );
}

function Verdict({ c }: { c: CombinedValue }) {
  if (c.n < 2) return <span className="text-xs text-muted" data-testid="chi2-verdict" data-verdict="single">single measurement</span>;
  return c.inconsistent ? (
    <span data-testid="chi2-verdict" data-verdict="inconsistent" className="inline-block rounded-full bg-bad/10 px-2 py-0.5 text-xs font-medium text-bad ring-1 ring-bad/40" title={`χ² tail probability below ${INCONSISTENT_TAIL_PROBABILITY}: the repeats disagree by more than their errors allow`}>
      inconsistent (P &lt; {INCONSISTENT_TAIL_PROBABILITY})
    </span>
  ) : (
    <span data-testid="chi2-verdict" data-verdict="consistent" className="inline-block rounded-full bg-ok/10 px-2 py-0.5 text-xs font-medium text-ok ring-1 ring-ok/40">
      consistent
    </span>
  );
}

/** Everything known about one star: position, every measurement, the combined values and the plots. */
export function StarDetailView({ data, me }: { data: StarDetail; me: Me | null | undefined }) {
  const { star, measurements, combined, units } = data;
  const canOpenBatch = can(me, ['observer', 'curator']);
  return (
    <div className="space-y-6">
      <div>
        <h1 className="text-2xl font-semibold tracking-tight text-night" data-testid="star-name">
          {star.name}
        </h1>
        <p className="mt-1 font-mono text-sm text-muted">source_id {star.sourceId ?? 'none (a Starveil star)'}</p>
      </div>
      <Card>
        <dl className="grid grid-cols-2 gap-4 md:grid-cols-4 lg:grid-cols-7">
          <Fact label="RA [deg, ICRS]">{fixed(star.ra_deg, 6)}</Fact>
          <Fact label="Dec [deg, ICRS]">{fixed(star.dec_deg, 6)}</Fact>
          <Fact label="l [deg]">{fixed(star.glon_deg, 4)}</Fact>
          <Fact label="b [deg]">{fixed(star.glat_deg, 4)}</Fact>
          <Fact label="parallax [mas]">{star.parallax_mas == null ? '—' : `${fixed(star.parallax_mas, 4)}${star.parallax_err_mas != null ? ` ± ${fixed(star.parallax_err_mas, 4)}` : ''}`}</Fact>
          <Fact label="measurements">{formatCount(measurements.length)}</Fact>
          <Fact label="star id">{star.id}</Fact>
        </dl>
      </Card>

      <Card title="Combined value per band and instrument">
        {combined.length === 0 ? (
          <p className="text-sm text-muted">No approved measurement yet: a combined value is made from approved measurements only.</p>
        ) : (
          <StarTable
            label="Combined values"
            columns={[
              { label: 'band', className: 'py-2 pr-3 font-medium' },
              { label: 'instrument', className: 'pr-3 font-medium' },
              ...cols(RIGHT, 'n', 'q [fraction]', 'u [fraction]', 'p [fraction]', 'p debiased [fraction]', 'θ [deg]'),
              { label: 'χ² / dof', className: RIGHT, title: 'χ² = Σ (q−q̄)²/σq² + (u−ū)²/σu², with 2(n−1) degrees of freedom' },
              { label: 'P(≥ χ²)', className: RIGHT, title: 'probability of a χ² at least this large if the repeats agree' },
              { label: 'repeats', className: 'font-medium' },
            ]}
            after={<p className="mt-2 text-xs text-muted">Inverse-variance weighted means of q and u, from the approved measurements only; repeats are flagged inconsistent when the χ² tail probability is below {INCONSISTENT_TAIL_PROBABILITY}.</p>}
          >
            {combined.map((c) => (
              <tr key={`${c.band}|${c.instrument}`} className="border-b border-line/60" data-testid="combined-row" data-band={c.band} data-instrument={c.instrument}>
                <td className="py-2 pr-3 font-sans font-semibold" style={{ color: BAND_COLOURS[c.band] }}>
                  {c.band}
                </td>
                <td className="pr-3 font-sans">{c.instrument}</td>
                <td className="pr-3 text-right" data-testid="combined-n">{c.n}</td>
                <td className="pr-3 text-right" data-testid="combined-q">{pm(c.q, c.qErr, 6)}</td>
                <td className="pr-3 text-right" data-testid="combined-u">{pm(c.u, c.uErr, 6)}</td>
                <td className="pr-3 text-right">{pm(c.p, c.pErr, 5)}</td>
                <td className="pr-3 text-right">{fixed(c.pDebiased, 5)}</td>
                <td className="pr-3 text-right">{pm(c.thetaDeg, c.thetaErrDeg, 2)}</td>
                <td className="pr-3 text-right" data-testid="combined-chi2">
                  {c.n < 2 ? '—' : `${c.chi2.toFixed(2)} / ${c.dof}`}
                </td>
                <td className="pr-3 text-right" data-testid="combined-p-tail">{c.n < 2 ? '—' : formatProbability(c.tailProbability)}</td>
                <td className="font-sans">
                  <Verdict c={c} />
                </td>
              </tr>
            ))}
          </StarTable>
        )}
      </Card>

      <div className="grid gap-6 lg:grid-cols-[minmax(0,30rem)_minmax(0,1fr)]">
        <Card title="q–u plane">
          <QuPlanePlot measurements={measurements} combined={combined} />
          <p className="mt-2 text-xs text-muted">1σ error bars; filled points are approved, hollow ones are not (yet). The star marks the combined value. q, u: {units.q ?? 'fraction'}.</p>
        </Card>
        <Card title="p and θ against epoch">
          <EpochPlots measurements={measurements} combined={combined} />
          <p className="mt-2 text-xs text-muted">Dashed: the combined value per band. θ: {units.theta_deg ?? 'deg'}.</p>
        </Card>
      </div>

      <Card title="Every measurement">
        <StarTable
          label="Measurements of this star"
          columns={[
            { label: 'state', className: 'py-2 pl-1 pr-3 font-medium' },
            { label: 'epoch, MJD [d]', className: RIGHT },
            ...cols('pr-3 font-medium', 'band', 'instrument'),
            ...cols(RIGHT, 'q [fraction]', 'u [fraction]', 'p [fraction]', 'θ [deg]', 'θ Galactic [deg]', 'distance [pc]'),
            { label: 'flags', className: 'pr-3 font-medium' },
            { label: 'batch', className: 'font-medium' },
          ]}
        >
          {measurements.map((m) => (
            <tr key={m.id} className="border-b border-line/60" data-testid="star-measurement" data-id={m.id}>
              <td className="py-1.5 pl-1 pr-3 font-sans">
                <MeasurementStateBadge state={m.state} />
              </td>
              <td className="pr-3 text-right">{m.mjd == null ? '—' : fixed(m.mjd, 5)}</td>
              <td className="pr-3 font-sans font-semibold" style={{ color: BAND_COLOURS[m.band] }}>
                {m.band}
              </td>
              <td className="pr-3 font-sans">{m.instrument}</td>
              <td className="pr-3 text-right">{pm(m.q, m.q_err, 6)}</td>
              <td className="pr-3 text-right">{pm(m.u, m.u_err, 6)}</td>
              <td className="pr-3 text-right">{pm(m.p, m.p_err, 5)}</td>
              <td className="pr-3 text-right">{pm(m.theta_deg, m.theta_err_deg, 2)}</td>
              <td className="pr-3 text-right">{fixed(m.theta_gal_deg, 2)}</td>
              <td className="pr-3 text-right" title={m.distance_method ? `${m.distance_method.replace(/_/g, ' ')}; 16th–84th percentile ${fixed(m.distance_lo_pc, 0)}–${fixed(m.distance_hi_pc, 0)} pc` : undefined}>
                {fixed(m.distance_pc, 0)}
              </td>
              <td className="pr-3 font-sans text-xs text-amber-deep">{m.flags.map((f) => f.replace(/_/g, ' ')).join(', ') || <span className="text-muted">—</span>}</td>
              <td className="font-sans text-xs">
                {canOpenBatch ? (
                  <Link className="text-veil underline-offset-2 hover:underline" to={`/review/batches/${m.batchId}`}>
                    #{m.batchId}
                  </Link>
                ) : (
                  `#${m.batchId}`
                )}
              </td>
            </tr>
          ))}
        </StarTable>
      </Card>
    </div>
  );
}

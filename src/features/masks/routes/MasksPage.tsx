import { useSearchParams } from 'react-router-dom';
import { Card, Notice, PageTitle } from '../../../components/ui/primitives';
import { ApiError } from '../../../lib/apiClient';
import { useFinishedRuns } from '../api/finishedRuns';
import { useMaskSummary } from '../api/maskSummary';
import { useReleases } from '../api/releases';
import { CriteriaForm } from '../components/CriteriaForm';
import { Downloads } from '../components/Downloads';
import { FlaggedList } from '../components/FlaggedList';
import { MaskPreview } from '../components/MaskPreview';
import { criteriaFromParams, maskQuery, type MaskCriteria } from '../query';

/** Build a sky mask from criteria, look at it, and download it as FITS, MOC or CSV. */
export function MasksPage() {
  const [params, setParams] = useSearchParams();
  const criteria = criteriaFromParams(params);
  const query = maskQuery(criteria);
  const summary = useMaskSummary(query);
  const runs = useFinishedRuns();
  const releases = useReleases();
  const apply = (c: MaskCriteria) => setParams(new URLSearchParams(maskQuery(c)));

  const err = summary.error instanceof ApiError ? summary.error : null;
  const fieldErrors: Record<string, string> = {};
  for (const f of ((err?.details as { fields?: { field: string; message: string }[] } | undefined)?.fields ?? [])) fieldErrors[f.field] = f.message;
  const s = summary.error ? undefined : summary.data; // never show a previous mask beside an error

  return (
    <div className="space-y-6">
      <PageTitle sub="Sightlines where one dust layer is not enough, as a HEALPix map for modelling codes and a MOC for coverage tools.">Masks</PageTitle>
      <div className="grid gap-6 lg:grid-cols-[20rem_1fr]">
        <Card title="Criteria">
          <CriteriaForm key={query} initial={criteria} runs={runs.data ?? []} releases={releases.data?.releases ?? []} fieldErrors={fieldErrors} onApply={apply} />
        </Card>
        <div className="space-y-6">
          {summary.error && <Notice tone="bad">{summary.error.message}</Notice>}
          {summary.isPending && <p className="text-sm text-muted">Building the mask…</p>}
          {s && (
            <>
              <Card title="Preview">
                <dl className="mb-4 grid grid-cols-2 gap-3 text-sm sm:grid-cols-4" data-testid="mask-counts">
                  <div><dt className="text-xs text-muted">Flagged cells</dt><dd className="num text-xl font-semibold text-night">{s.counts.flagged}</dd></div>
                  <div><dt className="text-xs text-muted">Cells in the run</dt><dd className="num text-xl font-semibold text-night">{s.counts.cells}</dd></div>
                  <div><dt className="text-xs text-muted">Sky covered (MOC)</dt><dd className="num text-xl font-semibold text-night">{(100 * s.moc.skyFraction).toFixed(2)} %</dd></div>
                  <div><dt className="text-xs text-muted">From</dt><dd className="text-sm font-medium text-night">run {s.run.id}{s.release ? ` · release ${s.release}` : ''}</dd></div>
                </dl>
                <MaskPreview cells={s.cells} nside={s.run.params.nside} frame={s.frame} />
                {s.frame === 'G' && (
                  <p className="mt-2 text-xs text-muted">
                    MOCs are equatorial (ICRS): the MOC holds the order-{s.moc.order} ICRS cells whose centres fall in flagged Galactic cells, so its edge follows the Galactic cells to within one such cell.
                  </p>
                )}
              </Card>
              <Card title="Download">
                <Downloads criteria={criteria} summary={s} />
              </Card>
              <Card title="Flagged cells">
                <FlaggedList cells={s.cells} frame={s.frame} />
              </Card>
            </>
          )}
        </div>
      </div>
    </div>
  );
}

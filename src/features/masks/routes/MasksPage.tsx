import { useEffect, useRef, useState } from 'react';
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

/** Criteria are applied this long after the last edit (typing a number does not fetch per keystroke). */
const APPLY_AFTER_MS = 350;

/**
 * Build a sky mask from criteria, look at it, and download it as FITS, MOC or CSV. The form is
 * the one source of truth: download links are built from it directly, and the preview follows it
 * (debounced) and says so while it is catching up.
 */
export function MasksPage() {
  const [params, setParams] = useSearchParams();
  const applied = criteriaFromParams(params);
  const query = maskQuery(applied);
  const [form, setForm] = useState<MaskCriteria>(applied);
  const formQuery = maskQuery(form);
  const summary = useMaskSummary(query);
  const runs = useFinishedRuns();
  const releases = useReleases();
  const apply = (c: MaskCriteria) => {
    if (maskQuery(c) !== query) setParams(new URLSearchParams(maskQuery(c)), { replace: true });
  };
  // the form changed: apply it once the person pauses
  const latest = useRef(form);
  latest.current = form;
  useEffect(() => {
    if (formQuery === query) return;
    const timer = setTimeout(() => apply(latest.current), APPLY_AFTER_MS);
    return () => clearTimeout(timer);
    // eslint-disable-next-line react-hooks/exhaustive-deps -- only a change of the form or of the applied query restarts the timer; it applies the form as it is then
  }, [formQuery, query]);
  // the address changed from outside (back/forward, a shared link): the form follows it
  const lastQuery = useRef(query);
  useEffect(() => {
    if (lastQuery.current !== query && query !== maskQuery(latest.current)) setForm(criteriaFromParams(new URLSearchParams(query)));
    lastQuery.current = query;
  }, [query]);
  // the preview shows the mask of exactly the form's criteria, or says it is catching up
  const current = formQuery === query && !summary.isPlaceholderData && !summary.isFetching;

  const err = summary.error instanceof ApiError ? summary.error : null;
  const fieldErrors: Record<string, string> = {};
  for (const f of ((err?.details as { fields?: { field: string; message: string }[] } | undefined)?.fields ?? [])) fieldErrors[f.field] = f.message;
  const s = summary.error ? undefined : summary.data; // never show a previous mask beside an error

  return (
    <div className="space-y-6">
      <PageTitle sub="Sightlines where one dust layer is not enough, as a HEALPix map for modelling codes and a MOC for coverage tools.">Masks</PageTitle>
      <div className="grid gap-6 lg:grid-cols-[20rem_1fr]">
        <Card title="Criteria">
          <CriteriaForm value={form} onChange={setForm} runs={runs.data ?? []} releases={releases.data?.releases ?? []} fieldErrors={formQuery === query ? fieldErrors : {}} onApply={(c) => { setForm(c); apply(c); }} />
        </Card>
        <div className="space-y-6">
          {summary.error && <Notice tone="bad">{summary.error.message}</Notice>}
          {summary.isPending && <p className="text-sm text-muted">Building the mask…</p>}
          {s && (
            <>
              <Card title="Preview">
                <p className={`mb-2 text-xs ${current ? 'text-muted' : 'font-medium text-night'}`} role="status" data-testid="mask-status" data-current={current ? 'yes' : 'no'}>
                  {current ? 'Showing the mask of the criteria as set.' : 'Updating to the criteria as set…'}
                </p>
                <dl className={`mb-4 grid grid-cols-2 gap-3 text-sm sm:grid-cols-4 ${current ? '' : 'opacity-50'}`} data-testid="mask-counts" data-query={current ? query : ''}>
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
                <Downloads criteria={form} summary={s} />
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

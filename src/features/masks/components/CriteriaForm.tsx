import type { FormEvent, ReactNode } from 'react';
import { Button, Field, Select, TextInput } from '../../../components/ui/primitives';
import type { Release } from '../api/releases';
import type { RunSummary } from '../api/finishedRuns';
import { DEFAULT_CRITERIA, type MaskCriteria } from '../query';

const NSIDE_CHOICES = [16, 32, 64, 128, 256, 512];

function NumberField({ label, hint, value, onChange, step = 'any', error }: { label: string; hint: string; value: string; onChange: (v: string) => void; step?: string; error?: string | null }) {
  return (
    <Field label={label} hint={hint} error={error}>
      <TextInput type="number" min={0} step={step} inputMode="decimal" value={value} onChange={(e) => onChange(e.target.value)} />
    </Field>
  );
}

function Group({ title, children }: { title: string; children: ReactNode }) {
  return (
    <fieldset className="space-y-3 rounded-lg border border-line p-3">
      <legend className="px-1 text-xs font-semibold uppercase tracking-wide text-muted">{title}</legend>
      {children}
    </fieldset>
  );
}

/**
 * The mask criteria, controlled by the page: every change goes up at once (the page applies it
 * after a short pause, and builds the download links from it). "Show mask" applies at once; the
 * server checks every value again.
 */
export function CriteriaForm({ value: c, onChange, runs, releases, fieldErrors, onApply }: { value: MaskCriteria; onChange: (c: MaskCriteria) => void; runs: RunSummary[]; releases: Release[]; fieldErrors: Record<string, string>; onApply: (c: MaskCriteria) => void }) {
  const set = <K extends keyof MaskCriteria>(k: K) => (v: MaskCriteria[K]) => onChange({ ...c, [k]: v });
  const submit = (e: FormEvent) => {
    e.preventDefault();
    onApply(c);
  };
  // the run the mask will come from: the release's, the one chosen, or the latest finished (runs come newest first)
  const releaseRun = c.release ? releases.find((r) => r.tag === c.release)?.runId : undefined;
  const runNside = runs.find((r) => r.id === (releaseRun ?? (c.run ? Number(c.run) : runs[0]?.id)))?.params.nside;
  return (
    <form onSubmit={submit} className="space-y-4" aria-label="Mask criteria">
      <Group title="Data">
        <Field label="Release" hint="A frozen release answers the same forever" error={fieldErrors.release}>
          <Select className="w-full" value={c.release} onChange={(e) => set('release')(e.target.value)}>
            <option value="">none (live data)</option>
            {releases.map((r) => <option key={r.tag} value={r.tag}>{r.tag} · run {r.runId}</option>)}
          </Select>
        </Field>
        <Field label="Run" hint={c.release ? 'set by the release' : 'default: the latest finished run'} error={fieldErrors.run}>
          <Select className="w-full" value={c.release ? '' : c.run} disabled={!!c.release} onChange={(e) => set('run')(e.target.value)}>
            <option value="">latest finished</option>
            {runs.map((r) => <option key={r.id} value={r.id}>run {r.id} · NSIDE {r.params.nside} · {r.params.coordsys === 'G' ? 'Galactic' : 'equatorial'} · {r.params.band}</option>)}
          </Select>
        </Field>
      </Group>
      <Group title="Flag a cell when it has">
        <NumberField label="Layers, at least" hint="default 2" step="1" value={c.minLayers} onChange={set('minLayers')} error={fieldErrors.minLayers} />
        <NumberField label="Jump |Δθ|, at least (deg)" hint="0–90; with the significance below, on the same jump" value={c.minJumpDeg} onChange={set('minJumpDeg')} error={fieldErrors.minJumpDeg} />
        <NumberField label="Jump significance, at least (σ)" hint="|Δθ| / σ of that jump" value={c.minSignificance} onChange={set('minSignificance')} error={fieldErrors.minSignificance} />
        <NumberField label="Stars, at least" hint="stars in the cell" step="1" value={c.minStars} onChange={set('minStars')} error={fieldErrors.minStars} />
        <div className="grid grid-cols-2 gap-3">
          <NumberField label="Layer from (pc)" hint="a layer in this range" value={c.minDistancePc} onChange={set('minDistancePc')} error={fieldErrors.minDistancePc} />
          <NumberField label="to (pc)" hint="near edge, median" value={c.maxDistancePc} onChange={set('maxDistancePc')} error={fieldErrors.maxDistancePc} />
        </div>
      </Group>
      <Group title="Output">
        <Field label="Map NSIDE" hint="finer than the run splits each cell into its NESTED children" error={fieldErrors.nside}>
          <Select className="w-full" value={c.nside} onChange={(e) => set('nside')(e.target.value)}>
            <option value="">the run's ({runNside ?? '…'})</option>
            {NSIDE_CHOICES.filter((n) => !runNside || n > runNside).map((n) => <option key={n} value={n}>{n}</option>)}
          </Select>
        </Field>
        <Field label="Polarization convention" hint="stated in every file; the mask values do not depend on it">
          <Select className="w-full" value={c.convention} onChange={(e) => set('convention')(e.target.value as 'iau' | 'cosmo')}>
            <option value="iau">IAU (θ from north through east)</option>
            <option value="cosmo">COSMO (U = −U_IAU)</option>
          </Select>
        </Field>
      </Group>
      <div className="flex gap-2">
        <Button type="submit">Show mask</Button>
        <Button type="button" tone="quiet" onClick={() => onApply(DEFAULT_CRITERIA)}>Defaults</Button>
      </div>
    </form>
  );
}

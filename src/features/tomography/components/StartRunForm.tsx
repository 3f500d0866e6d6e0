import { useState, type FormEvent } from 'react';
import { Button, Field, Notice, Select, TextInput } from '../../../components/ui/primitives';
import { ApiError } from '../../../lib/apiClient';
import { useStartRun, type StartRunInput } from '../api/startRun';
import { BANDS, NSIDES, type CoordSys } from '../types';

/** The server's defaults for a run (schemas/api/tomography-run.json). */
const DEFAULTS = { nside: '32', coordsys: 'G' as CoordSys, band: 'R', minStars: '10', draws: '100', jumpThresholdDeg: '30', minSegmentLength: '3', ra: '', dec: '', radius: '5' };
type Form = typeof DEFAULTS;

interface FieldProblem {
  field: string;
  message: string;
}

/** Problems the server named, by field ("region.ra" → "ra"). */
function problemsByField(err: unknown): Record<string, string> {
  if (!(err instanceof ApiError)) return {};
  const fields = (err.details as { fields?: FieldProblem[] } | undefined)?.fields ?? [];
  const out: Record<string, string> = {};
  for (const f of fields) out[f.field.replace(/^region\./, '')] = f.message;
  return out;
}

/** Numbers the person typed; a blank or non-number is left for the server to name. */
const numberOf = (s: string) => (s.trim() === '' ? Number.NaN : Number(s));

/** Start a tomography run over the approved catalog (curator, admin). */
export function StartRunForm({ onStarted }: { onStarted?: (id: number) => void }) {
  const [f, setF] = useState<Form>(DEFAULTS);
  const [cone, setCone] = useState(false);
  const [normalise, setNormalise] = useState(false);
  const start = useStartRun();
  const problems = problemsByField(start.error);
  const set = (k: keyof Form) => (e: { target: { value: string } }) => setF({ ...f, [k]: e.target.value });
  /** A typed number of the form, with the server's complaint about it under the box (a plain function, not a component: the input must keep its identity while typed in). */
  const numberField = (label: string, hint: string, name: keyof Form, mode: 'numeric' | 'decimal') => (
    <Field label={label} hint={hint} error={problems[name]}>
      <TextInput inputMode={mode} value={f[name] as string} onChange={set(name)} />
    </Field>
  );

  const submit = (e: FormEvent) => {
    e.preventDefault();
    const body: StartRunInput = {
      // the selects offer only the allowed values
      nside: Number(f.nside) as StartRunInput['nside'],
      coordsys: f.coordsys,
      band: f.band as StartRunInput['band'],
      minStars: numberOf(f.minStars),
      draws: numberOf(f.draws),
      jumpThresholdDeg: numberOf(f.jumpThresholdDeg),
      minSegmentLength: numberOf(f.minSegmentLength),
      ...(normalise ? { referenceBand: f.band as StartRunInput['band'] } : {}),
      ...(cone ? { region: { ra: numberOf(f.ra), dec: numberOf(f.dec), radius: numberOf(f.radius) } } : {}),
    };
    // JSON has no NaN: a blank number goes as null, which the server refuses naming the field
    const clean = JSON.parse(JSON.stringify(body, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v))) as StartRunInput;
    start.mutate(clean, { onSuccess: (run) => onStarted?.(run.id) });
  };

  return (
    <form onSubmit={submit} className="space-y-4" aria-label="Start a run">
      <div className="grid gap-4 sm:grid-cols-2 lg:grid-cols-4">
        <Field label="NSIDE" hint="HEALPix cells, nested; 32 ≈ 1.8° across" error={problems.nside}>
          <Select value={f.nside} onChange={set('nside')} className="w-full">
            {NSIDES.map((n) => (
              <option key={n} value={n}>
                {n}
              </option>
            ))}
          </Select>
        </Field>
        <Field label="Frame" hint="of the cells and the angles" error={problems.coordsys}>
          <Select value={f.coordsys} onChange={set('coordsys')} className="w-full">
            <option value="G">Galactic</option>
            <option value="C">Equatorial (ICRS)</option>
          </Select>
        </Field>
        <Field label="Band" error={problems.band}>
          <Select value={f.band} onChange={set('band')} className="w-full">
            {BANDS.map((b) => (
              <option key={b} value={b}>
                {b}
              </option>
            ))}
          </Select>
        </Field>
        <label className="flex items-start gap-2 self-end pb-1 text-sm">
          <input type="checkbox" checked={normalise} onChange={(e) => setNormalise(e.target.checked)} className="mt-1" />
          <span>
            Use every band, brought to this one
            <span className="block text-xs text-muted">Serkowski law, λmax 0.55 µm, K = 0.01 + 1.66 λmax (Whittet et al. 1992); recorded with the run</span>
          </span>
        </label>
        {numberField('Min stars per cell', '4 to 1000; fewer: skipped', 'minStars', 'numeric')}
        {numberField('Distance draws', '0 to 500 Monte Carlo draws per cell', 'draws', 'numeric')}
        {numberField('Jump threshold [deg]', '|Δθ| that makes a sightline complex', 'jumpThresholdDeg', 'decimal')}
        {numberField('Min stars per segment', '2 to 50', 'minSegmentLength', 'numeric')}
      </div>
      <fieldset className="rounded-lg border border-line p-3">
        <legend className="px-1 text-sm">
          <label className="inline-flex items-center gap-2 font-medium text-ink">
            <input type="checkbox" checked={cone} onChange={(e) => setCone(e.target.checked)} className="accent-night" />
            Only a cone of the sky
          </label>
        </legend>
        {cone ? (
          <div className="grid gap-4 sm:grid-cols-3">
            {numberField('Cone RA [deg]', 'ICRS, 0 ≤ RA < 360', 'ra', 'decimal')}
            {numberField('Cone Dec [deg]', 'ICRS, −90 to 90', 'dec', 'decimal')}
            {numberField('Cone radius [deg]', 'above 0, at most 180', 'radius', 'decimal')}
          </div>
        ) : (
          <p className="text-xs text-muted">Off: the run covers every approved star of the band.</p>
        )}
      </fieldset>
      {start.error && <Notice tone="bad">{start.error.message}</Notice>}
      <div className="flex items-center gap-3">
        <Button type="submit" disabled={start.isPending}>
          {start.isPending ? 'Starting…' : 'Start run'}
        </Button>
        <span className="text-xs text-muted">Runs wait in line and fit one at a time, on background threads; the same data and parameters give the same fingerprint.</span>
      </div>
    </form>
  );
}

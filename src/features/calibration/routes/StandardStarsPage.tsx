import { useState, type FormEvent } from 'react';
import { Button, Card, Field, Notice, PageTitle, Select, TextInput } from '../../../components/ui/primitives';
import { can } from '../../../lib/roles';
import { useMe } from '../../../lib/api/me';
import { useAddStandardStar, useStandardStars, type NewStandard } from '../api/standardStars';
import { usePlausibility } from '../../../lib/api/plausibility';

const num = (s: string) => (s.trim() === '' ? undefined : Number(s));

function AddStandardForm() {
  const add = useAddStandardStar();
  const [f, setF] = useState({ name: '', band: 'V', pPct: '', thetaDeg: '', ra: '', dec: '', source: '', fromMemory: false });
  const set = (k: keyof typeof f) => (e: { target: { value: string } }) => setF({ ...f, [k]: e.target.value });
  const submit = (e: FormEvent) => {
    e.preventDefault();
    add.mutate(
      { name: f.name, band: f.band as NewStandard['band'], pPct: Number(f.pPct), thetaDeg: num(f.thetaDeg) ?? null, raDeg: num(f.ra), decDeg: num(f.dec), source: f.source, fromMemory: f.fromMemory },
      { onSuccess: () => setF({ ...f, name: '', pPct: '', thetaDeg: '', ra: '', dec: '' }) },
    );
  };
  const fields = (add.error as { details?: { fields?: { field: string; message: string }[] } } | null)?.details?.fields ?? [];
  const err = (k: string) => fields.find((x) => x.field === k)?.message ?? null;
  return (
    <form onSubmit={submit} className="grid gap-3 md:grid-cols-4" data-testid="add-standard">
      <Field label="Star name" error={err('name')}><TextInput required value={f.name} onChange={set('name')} placeholder="HD 204827" /></Field>
      <Field label="Band" error={err('band')}>
        <Select value={f.band} onChange={set('band')}>{['U', 'B', 'V', 'R', 'I'].map((b) => <option key={b}>{b}</option>)}</Select>
      </Field>
      <Field label="p [%]" error={err('pPct')}><TextInput required inputMode="decimal" value={f.pPct} onChange={set('pPct')} /></Field>
      <Field label="θ [deg, IAU]" hint="empty for an unpolarized standard" error={err('thetaDeg')}><TextInput inputMode="decimal" value={f.thetaDeg} onChange={set('thetaDeg')} /></Field>
      <Field label="RA [deg, ICRS]" hint="optional: enables the 5″ position match" error={err('raDeg')}><TextInput inputMode="decimal" value={f.ra} onChange={set('ra')} /></Field>
      <Field label="Dec [deg, ICRS]" error={err('decDeg')}><TextInput inputMode="decimal" value={f.dec} onChange={set('dec')} /></Field>
      <Field label="Source of the value" error={err('source')}><TextInput required value={f.source} onChange={set('source')} placeholder="paper, catalogue" /></Field>
      <label className="flex items-center gap-2 self-end pb-2 text-sm">
        <input type="checkbox" checked={f.fromMemory} onChange={(e) => setF({ ...f, fromMemory: e.target.checked })} /> not checked against the source
      </label>
      <div className="md:col-span-4 flex items-center gap-3">
        <Button type="submit" disabled={add.isPending}>Add the reference</Button>
        {add.error && !fields.length && <Notice tone="bad">{add.error.message}</Notice>}
        {add.error && fields.length > 0 && <span className="text-sm text-bad">{add.error.message}</span>}
        {add.isSuccess && <Notice tone="ok">Added {add.data.name} ({add.data.band}).</Notice>}
      </div>
    </form>
  );
}

/** Standard stars with their reference values and sources; curators add entries. */
export function StandardStarsPage() {
  const { data: me } = useMe();
  const q = useStandardStars();
  const pl = usePlausibility();
  return (
    <div className="space-y-6">
      <PageTitle sub="Batch rows are recognised as standards by name (case and spacing ignored) or within 5″ of a recorded position; they give each night’s angle zero-point and instrumental polarization.">
        Standard stars
      </PageTitle>
      {q.error && <Notice tone="bad">{q.error.message}</Notice>}
      <Card title="References">
        <table className="min-w-full text-sm" data-testid="standards-table">
          <thead className="text-left text-xs text-muted">
            <tr><th className="py-1 pr-3">star</th><th className="pr-3">band</th><th className="pr-3">kind</th><th className="pr-3">p</th><th className="pr-3">θ</th><th className="pr-3">position</th><th className="pr-3">source</th></tr>
          </thead>
          <tbody>
            {q.data?.standards.map((s) => (
              <tr key={s.id} className="border-t border-line">
                <td className="py-1 pr-3 font-medium text-night">{s.name}</td>
                <td className="pr-3">{s.band}</td>
                <td className="pr-3">{s.kind}</td>
                <td className="pr-3">{(s.p * 100).toFixed(2)} %</td>
                <td className="pr-3">{s.thetaDeg === null ? '—' : `${s.thetaDeg.toFixed(1)}°`}</td>
                <td className="pr-3">{s.raDeg === null ? <span className="text-muted">name only</span> : `${s.raDeg.toFixed(5)}, ${s.decDeg!.toFixed(5)}`}</td>
                <td className="pr-3">{s.source}{s.fromMemory ? <span className="ml-1 rounded bg-amber-100 px-1 text-xs text-amber-900">from memory</span> : null}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </Card>
      {can(me, ['curator']) && (
        <Card title="Add a reference">
          <AddStandardForm />
        </Card>
      )}
      {pl.data && (
        <Card title="Plausibility flags">
          <ul className="space-y-1 text-sm">
            {pl.data.flags.map((f) => (
              <li key={f.flag}><code className="text-night">{f.flag}</code> — {f.description}{f.flag === 'above_p_ceiling' ? ` (now ${(pl.data.pCeiling * 100).toFixed(1)} %)` : ''}</li>
            ))}
          </ul>
        </Card>
      )}
    </div>
  );
}

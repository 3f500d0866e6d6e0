import { useState, type FormEvent, type ReactNode } from 'react';
import { Button, Card, Field, Notice, PageTitle, TextInput } from '../../../components/ui/primitives';
import { useMe } from '../../../lib/api/me';
import { formatCount } from '../../../lib/format';
import { BANDS, useCreateInstrument, useRegisteredInstruments, useUpdateInstrument, type Band, type RegisteredInstrument } from '../api/instruments';

/**
 * The instrument registry: everyone reads it; admins register instruments and change their bands.
 * `calibrations` draws an instrument's calibration history: another feature's list, handed in by
 * the app (src/app/pages/) so features never import each other.
 */
export function InstrumentsPage({ calibrations }: { calibrations?: (code: string) => ReactNode }) {
  const instruments = useRegisteredInstruments();
  const { data: me } = useMe();
  const isAdmin = me?.role === 'admin';
  return (
    <div className="space-y-6">
      <PageTitle sub="Every upload names one of these codes (the instrument column or the batch’s instrument) and may use only its bands.">Instruments</PageTitle>
      <Card title="Registered instruments">
        {instruments.isPending && <p className="text-sm text-muted">Loading…</p>}
        {instruments.error && <Notice tone="bad">The instruments could not be loaded: {instruments.error.message}</Notice>}
        {instruments.data && (
          <table className="w-full text-left text-sm">
            <thead className="border-b border-line text-xs uppercase tracking-wide text-muted">
              <tr><th className="py-2">Code</th><th>Name</th><th>Bands</th><th>Description</th><th className="text-right">Measurements</th>{isAdmin && <th />}</tr>
            </thead>
            <tbody>
              {instruments.data.instruments.map((i) => <InstrumentRow key={i.id} instrument={i} editable={isAdmin} />)}
            </tbody>
          </table>
        )}
      </Card>
      {instruments.data && calibrations && (
        <Card title="Calibrations from standard stars" actions={<a href="/calibration/standards" className="text-sm text-veil underline-offset-2 hover:underline">Standard stars</a>}>
          <div className="space-y-5">
            {instruments.data.instruments.map((i) => (
              <section key={i.code} className="space-y-1">
                <h3 className="font-mono text-sm font-medium text-night">{i.code}</h3>
                {calibrations(i.code)}
              </section>
            ))}
          </div>
        </Card>
      )}
      {isAdmin ? <NewInstrument /> : <p className="text-sm text-muted">An instrument that is not listed can be registered by an admin.</p>}
    </div>
  );
}

function BandPicker({ value, onChange, label }: { value: Band[]; onChange: (b: Band[]) => void; label: string }) {
  return (
    <div className="flex flex-wrap gap-x-3 gap-y-1" role="group" aria-label={label}>
      {BANDS.map((b) => (
        <label key={b} className="flex items-center gap-1 text-sm">
          <input type="checkbox" checked={value.includes(b)} onChange={(e) => onChange(e.target.checked ? BANDS.filter((x) => x === b || value.includes(x)) : value.filter((x) => x !== b))} />
          {b}
        </label>
      ))}
    </div>
  );
}

function InstrumentRow({ instrument, editable }: { instrument: RegisteredInstrument; editable: boolean }) {
  const update = useUpdateInstrument();
  const [editing, setEditing] = useState(false);
  const [form, setForm] = useState({ name: instrument.name, bands: instrument.bands, description: instrument.description ?? '' });
  if (editing) {
    return (
      <tr className="border-b border-line/60 align-top">
        <td className="whitespace-nowrap py-2 pr-3 font-mono">{instrument.code}</td>
        <td><TextInput aria-label={`Name of ${instrument.code}`} value={form.name} onChange={(e) => setForm({ ...form, name: e.target.value })} /></td>
        <td className="min-w-40 pr-3"><BandPicker label={`Bands of ${instrument.code}`} value={form.bands} onChange={(bands) => setForm({ ...form, bands })} /></td>
        <td><TextInput aria-label={`Description of ${instrument.code}`} value={form.description} onChange={(e) => setForm({ ...form, description: e.target.value })} /></td>
        <td className="num text-right">{formatCount(instrument.measurements)}</td>
        <td className="space-y-1 text-right">
          <Button
            disabled={update.isPending || form.bands.length === 0 || !form.name.trim()}
            onClick={() => update.mutate({ code: instrument.code, name: form.name, bands: form.bands, description: form.description || null }, { onSuccess: () => setEditing(false) })}
          >
            Save
          </Button>
          <Button tone="quiet" onClick={() => setEditing(false)}>Cancel</Button>
          {update.error && <Notice tone="bad">{update.error.message}</Notice>}
        </td>
      </tr>
    );
  }
  return (
    <tr className="border-b border-line/60">
      <td className="whitespace-nowrap py-2 pr-3 font-mono font-medium text-night">{instrument.code}</td>
      <td>{instrument.name}</td>
      <td>{instrument.bands.join(', ')}</td>
      <td className="text-muted">{instrument.description ?? '—'}</td>
      <td className="num text-right">{formatCount(instrument.measurements)}</td>
      {editable && (
        <td className="text-right">
          <Button tone="quiet" onClick={() => { setForm({ name: instrument.name, bands: instrument.bands, description: instrument.description ?? '' }); setEditing(true); }}>Edit</Button>
        </td>
      )}
    </tr>
  );
}

function NewInstrument() {
  const create = useCreateInstrument();
  const empty = { code: '', name: '', bands: ['V'] as Band[], description: '' };
  const [form, setForm] = useState(empty);
  const submit = (e: FormEvent) => {
    e.preventDefault();
    create.mutate({ code: form.code.trim(), name: form.name.trim(), bands: form.bands, description: form.description.trim() || null }, { onSuccess: () => setForm(empty) });
  };
  return (
    <Card title="Register an instrument">
      <form onSubmit={submit} className="grid gap-4 sm:grid-cols-2">
        <Field label="Code" hint="What uploads write in the instrument column, e.g. KR-KITE (letters, digits, . _ -)">
          <TextInput required value={form.code} maxLength={40} pattern="[A-Za-z0-9][A-Za-z0-9._\-]*" onChange={(e) => setForm({ ...form, code: e.target.value })} />
        </Field>
        <Field label="Name">
          <TextInput required value={form.name} maxLength={200} onChange={(e) => setForm({ ...form, name: e.target.value })} />
        </Field>
        <Field label="Bands" hint="Johnson–Cousins bands it observes in">
          <BandPicker label="Bands of the new instrument" value={form.bands} onChange={(bands) => setForm({ ...form, bands })} />
        </Field>
        <Field label="Description (optional)">
          <TextInput value={form.description} maxLength={2000} onChange={(e) => setForm({ ...form, description: e.target.value })} />
        </Field>
        <div className="sm:col-span-2 flex items-center gap-3">
          <Button type="submit" disabled={create.isPending || form.bands.length === 0}>Register</Button>
          {create.isSuccess && <Notice tone="ok">Registered {create.data.code}.</Notice>}
          {create.error && <Notice tone="bad">{create.error.message}</Notice>}
        </div>
      </form>
    </Card>
  );
}

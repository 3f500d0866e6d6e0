import { Select } from '../../../components/ui/primitives';
import type { Run } from '../types';

export const runLabel = (r: Run) =>
  `Run ${r.id} · NSIDE ${r.params.nside} · ${r.params.coordsys === 'G' ? 'Galactic' : 'equatorial'} · ${r.params.band} band${r.params.region ? ' · cone' : ''} · ${new Date(r.finishedAt ?? r.createdAt).toLocaleDateString('en')}`;

/** Choose one of the finished runs. */
export function RunPicker({ runs, value, onChange }: { runs: Run[]; value: number | undefined; onChange: (id: number) => void }) {
  const done = runs.filter((r) => r.state === 'done');
  return (
    <label className="inline-flex items-center gap-2 text-sm">
      <span className="text-muted">Run</span>
      <Select aria-label="Run" value={value ?? ''} onChange={(e) => onChange(Number(e.target.value))}>
        {done.map((r) => (
          <option key={r.id} value={r.id}>
            {runLabel(r)}
          </option>
        ))}
      </Select>
    </label>
  );
}

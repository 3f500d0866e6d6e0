import { useState, type FormEvent } from 'react';
import { Button } from '../../../components/ui/primitives';
import type { Cone } from '../types';

import type { FieldProblem } from '../../../lib/api/types';

export type { FieldProblem };

const FIELD_LABEL: Record<string, string> = { ra: 'RA', dec: 'Dec', l: 'l', b: 'b', radius: 'Radius' };

/** Search by name or source_id, and a cone search around a position. */
export function CatalogSearch({ q, cone, problems, onSearch, onCone, onClear }: { q: string; cone: Cone | null; problems: FieldProblem[]; onSearch: (q: string) => void; onCone: (c: Cone) => void; onClear: () => void }) {
  const [text, setText] = useState(q);
  const [c, setC] = useState<Cone>(cone ?? { ra: '', dec: '', radius: '0.5', frame: 'icrs' });
  const gal = c.frame === 'galactic';
  const problem = (f: string) => problems.find((p) => p.field === f || (gal && ((f === 'ra' && p.field === 'l') || (f === 'dec' && p.field === 'b'))));
  const labelOf = (f: 'ra' | 'dec' | 'radius') => (f === 'radius' ? 'Radius [deg]' : gal ? (f === 'ra' ? 'l [deg]' : 'b [deg]') : f === 'ra' ? 'RA [deg]' : 'Dec [deg]');
  const submitText = (e: FormEvent) => {
    e.preventDefault();
    onSearch(text.trim());
  };
  const submitCone = (e: FormEvent) => {
    e.preventDefault();
    onCone({ ra: c.ra.trim(), dec: c.dec.trim(), radius: c.radius.trim(), frame: c.frame ?? 'icrs' });
  };
  const input = 'w-full rounded-md border bg-white px-3 py-2 text-sm outline-none focus:border-veil focus:ring-2 focus:ring-veil/30';
  return (
    <div className="grid gap-4 lg:grid-cols-[1fr_auto_1.3fr]">
      <form onSubmit={submitText} aria-label="Search stars" className="space-y-1">
        <label htmlFor="star-q" className="text-sm font-medium text-ink">
          Name or source_id
        </label>
        <div className="flex gap-2">
          <input id="star-q" type="search" value={text} onChange={(e) => setText(e.target.value)} placeholder="e.g. KRS J0647 or a whole source_id" className={`${input} border-line`} />
          <Button type="submit">Search</Button>
        </div>
        <p className="text-xs text-muted">Part of a name matches; a source_id must be given whole (it is text, all its digits).</p>
      </form>
      <div className="hidden items-center text-xs uppercase tracking-wide text-muted lg:flex">or</div>
      <form onSubmit={submitCone} aria-label="Cone search" className="space-y-1">
        <div className="flex items-center gap-3">
          <span className="text-sm font-medium text-ink">Cone search</span>
          <select aria-label="Centre given in" value={c.frame ?? 'icrs'} onChange={(e) => setC({ ...c, frame: e.target.value as Cone['frame'] })} className="rounded-md border border-line bg-white px-2 py-1 text-xs">
            <option value="icrs">RA, Dec (ICRS)</option>
            <option value="galactic">Galactic l, b</option>
          </select>
        </div>
        <div className="flex flex-wrap items-start gap-2">
          {(['ra', 'dec', 'radius'] as const).map((f) => {
            const p = problem(f);
            return (
              <label key={f} className={`${f === 'radius' ? 'w-24' : 'w-36'} space-y-0.5`}>
                <span className="text-xs text-muted">{labelOf(f)}</span>
                <input
                  aria-label={labelOf(f)}
                  inputMode="decimal"
                  value={c[f]}
                  aria-invalid={p ? true : undefined}
                  onChange={(e) => setC({ ...c, [f]: e.target.value })}
                  className={`${input} num font-mono ${p ? 'border-bad' : 'border-line'}`}
                  placeholder={f === 'radius' ? '≤ 30' : gal ? (f === 'ra' ? '0 – 360' : '−90 – 90') : f === 'ra' ? '217.4 or 14:29:42.6' : '-18.3 or -18:18:24'}
                />
              </label>
            );
          })}
          <div className="flex gap-2 pt-[1.1rem]">
            <Button type="submit">Find stars</Button>
            {(cone || q) && (
              <Button type="button" tone="quiet" onClick={() => { setText(''); onClear(); }}>
                Clear
              </Button>
            )}
          </div>
        </div>
        {problems.length > 0 && (
          <ul role="alert" className="space-y-0.5 text-xs text-bad">
            {problems.map((p) => (
              <li key={p.field}>
                <b>{FIELD_LABEL[p.field] ?? p.field}</b>
                {c[p.field as keyof Cone] !== undefined ? ` “${c[p.field as keyof Cone]}”` : ''}: {p.message}
              </li>
            ))}
          </ul>
        )}
      </form>
    </div>
  );
}

import type { Column } from '@tanstack/react-table';
import { useEffect, useRef, useState } from 'react';
import { Select } from '../../../components/ui/primitives';
import { formatCount } from '../../../lib/format';
import { useInstruments } from '../../../lib/api/instruments';
import { DISTANCE_METHODS, MEASUREMENT_STATES, type MeasurementFilters, type MeasurementState, type ReviewRow } from '../types';
import { COLUMN_INFO, COLUMN_TITLES } from './gridColumns';
import { measurementStateLabel } from '../../../components/ui/MeasurementStateBadge';

const BANDS = ['U', 'B', 'V', 'R', 'I'];

/** Filters on the state, band, instrument and distance-method columns, and a star search. */

/** Quality and plausibility flags the table can be filtered by (GET /plausibility describes them). */
const REVIEW_FLAGS = ['above_efficiency_envelope', 'above_p_ceiling', 'low_p_snr', 'inconsistent_repeats', 'low_parallax_snr', 'no_distance'];
export function GridFilters({ filters, onChange, totals }: { filters: MeasurementFilters; onChange: (f: MeasurementFilters) => void; totals?: Record<MeasurementState, number> }) {
  const instruments = useInstruments();
  const bands = instruments.data ? [...new Set(instruments.data.instruments.flatMap((i) => i.bands))].sort((a, b) => BANDS.indexOf(a) - BANDS.indexOf(b)) : BANDS;
  const set = (k: keyof MeasurementFilters) => (v: string) => onChange({ ...filters, [k]: v });
  const any = Object.values(filters).some((v) => v);
  const field = 'flex flex-col gap-0.5 text-[11px] font-medium uppercase tracking-wide text-muted';
  return (
    <div className="flex flex-wrap items-end gap-3" role="search" aria-label="Filter the measurements">
      <label className={field}>
        state
        <Select aria-label="Filter by state" value={filters.state ?? ''} onChange={(e) => set('state')(e.target.value)}>
          <option value="">any state</option>
          {MEASUREMENT_STATES.map((s) => (
            <option key={s} value={s}>
              {measurementStateLabel(s)}
              {totals ? ` (${formatCount(totals[s])})` : ''}
            </option>
          ))}
        </Select>
      </label>
      <label className={field}>
        band
        <Select aria-label="Filter by band" value={filters.band ?? ''} onChange={(e) => set('band')(e.target.value)}>
          <option value="">any band</option>
          {bands.map((b) => (
            <option key={b} value={b}>
              {b}
            </option>
          ))}
        </Select>
      </label>
      <label className={field}>
        instrument
        <Select aria-label="Filter by instrument" value={filters.instrument ?? ''} onChange={(e) => set('instrument')(e.target.value)}>
          <option value="">any instrument</option>
          {instruments.data?.instruments.map((i) => (
            <option key={i.code} value={i.code}>
              {i.code}
            </option>
          ))}
        </Select>
      </label>
      <label className={field}>
        distance method
        <Select aria-label="Filter by distance method" value={filters.distance_method ?? ''} onChange={(e) => set('distance_method')(e.target.value)}>
          <option value="">any method</option>
          {DISTANCE_METHODS.map((m) => (
            <option key={m} value={m}>
              {m.replace(/_/g, ' ')}
            </option>
          ))}
        </Select>
      </label>
      <label className={field}>
        flag
        <Select aria-label="Filter by flag" value={filters.flag ?? ''} onChange={(e) => set('flag')(e.target.value)}>
          <option value="">any or none</option>
          {REVIEW_FLAGS.map((f) => (
            <option key={f} value={f}>
              {f.replace(/_/g, ' ')}
            </option>
          ))}
        </Select>
      </label>
      <label className={`${field} min-w-[14rem] flex-1`}>
        star
        <input
          type="search"
          aria-label="Search by star name or source_id"
          placeholder="name (part of it) or whole source_id"
          value={filters.search ?? ''}
          onChange={(e) => set('search')(e.target.value)}
          className="rounded-md border border-line bg-white px-2.5 py-1.5 text-sm normal-case tracking-normal text-ink outline-none focus:border-veil"
        />
      </label>
      {any && (
        <button type="button" className="pb-2 text-sm text-veil underline underline-offset-2" onClick={() => onChange({})}>
          Clear filters
        </button>
      )}
    </div>
  );
}

/** Show or hide columns; the line column always stays. */
export function ColumnsMenu({ columns, onReset }: { columns: Column<ReviewRow, unknown>[]; onReset: () => void }) {
  const [open, setOpen] = useState(false);
  const box = useRef<HTMLDivElement>(null);
  useEffect(() => {
    if (!open) return;
    const away = (e: MouseEvent) => {
      if (!box.current?.contains(e.target as Node)) setOpen(false);
    };
    const esc = (e: KeyboardEvent) => e.key === 'Escape' && setOpen(false);
    document.addEventListener('mousedown', away);
    document.addEventListener('keydown', esc);
    return () => {
      document.removeEventListener('mousedown', away);
      document.removeEventListener('keydown', esc);
    };
  }, [open]);
  const hideable = columns.filter((c) => !COLUMN_INFO[c.id]?.fixed);
  const hidden = hideable.filter((c) => !c.getIsVisible()).length;
  return (
    <div ref={box} className="relative">
      <button
        type="button"
        aria-expanded={open}
        aria-haspopup="true"
        onClick={() => setOpen(!open)}
        className="inline-flex items-center gap-1.5 rounded-md border border-line bg-card px-3 py-1.5 text-sm text-night hover:bg-veil-soft"
      >
        <svg width="14" height="14" viewBox="0 0 14 14" aria-hidden>
          <path d="M1.5 2h3v10h-3zM5.5 2h3v10h-3zM9.5 2h3v10h-3z" fill="none" stroke="currentColor" strokeWidth="1.2" />
        </svg>
        Columns{hidden > 0 && <span className="num text-xs text-muted">({hidden} hidden)</span>}
      </button>
      {open && (
        <div role="group" aria-label="Visible columns" className="absolute right-0 z-30 mt-1 max-h-96 w-64 overflow-auto rounded-lg border border-line bg-card p-2 shadow-xl">
          {hideable.map((c) => (
            <label key={c.id} className="flex cursor-pointer items-center gap-2 rounded px-2 py-1 text-sm hover:bg-veil-soft">
              <input type="checkbox" checked={c.getIsVisible()} onChange={c.getToggleVisibilityHandler()} />
              <span className="text-ink">{COLUMN_TITLES[c.id] ?? c.id}</span>
            </label>
          ))}
          <button type="button" onClick={onReset} className="mt-1 w-full rounded px-2 py-1 text-left text-xs text-veil hover:bg-veil-soft">
            Back to the usual columns and widths
          </button>
        </div>
      )}
    </div>
  );
}

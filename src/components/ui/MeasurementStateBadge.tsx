import type { MeasurementState } from '../../lib/api/types';

const STATE: Record<MeasurementState, { label: string; tone: string; hint: string }> = {
  pending: { label: 'pending', tone: 'text-night bg-veil-soft ring-1 ring-veil/40', hint: 'checked, waiting for a curator' },
  conflict: { label: 'conflict', tone: 'text-warn bg-warn/10 ring-1 ring-warn/40', hint: 'differs from an earlier measurement of the same star, band and epoch' },
  ambiguous: { label: 'ambiguous', tone: 'text-night bg-amber/25 ring-1 ring-amber/60', hint: 'more than one known star lies within the match radius' },
  approved: { label: 'approved', tone: 'text-ok bg-ok/10 ring-1 ring-ok/40', hint: 'in the catalog' },
  rejected: { label: 'rejected', tone: 'text-bad bg-bad/10 ring-1 ring-bad/40', hint: 'kept, but out of the catalog' },
  withdrawn: { label: 'withdrawn', tone: 'text-ink bg-line ring-1 ring-line', hint: 'was approved; its batch was returned, so it is out of the catalog until the batch is approved again' },
};

export const measurementStateLabel = (s: MeasurementState) => STATE[s]?.label ?? s;

/** A measurement's review state (the intake badges cover batch and file-row states; this one the stored measurement's). */
export function MeasurementStateBadge({ state }: { state: MeasurementState }) {
  const s = STATE[state] ?? { label: state, tone: 'bg-line text-ink', hint: '' };
  return (
    <span data-testid="measurement-state" data-state={state} title={s.hint} className={`inline-block whitespace-nowrap rounded px-1.5 py-px text-[11px] font-medium ${s.tone}`}>
      {s.label}
    </span>
  );
}

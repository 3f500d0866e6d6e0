import { percentOf } from '../../lib/format';

/** A labelled bar; `total` null means the size is not known yet (the bar pulses). */
export function ProgressBar({ label, done, total, detail }: { label: string; done: number; total: number | null; detail?: string }) {
  const pct = total ? percentOf(done, total) : 0;
  return (
    <div className="space-y-1.5">
      <div className="flex items-baseline justify-between gap-4 text-sm">
        <span className="font-medium text-night">{label}</span>
        <span className="num text-muted">{detail ?? (total ? `${pct.toFixed(0)} %` : '')}</span>
      </div>
      <div
        role="progressbar"
        aria-label={label}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={total ? Math.round(pct) : undefined}
        className="h-2.5 overflow-hidden rounded-full bg-veil-soft"
      >
        <div
          className={`h-full rounded-full bg-gradient-to-r from-veil to-amber transition-[width] duration-300 ${total ? '' : 'w-1/3 animate-pulse'}`}
          style={total ? { width: `${pct}%` } : undefined}
        />
      </div>
    </div>
  );
}

import type { RunState } from '../types';

// 'interrupted': a run a restart stopped mid-fit (server/tomography/service.ts); no result kept
const STATES: Record<RunState | 'interrupted', { label: string; tone: string }> = {
  queued: { label: 'Waiting', tone: 'bg-line text-ink' },
  running: { label: 'Fitting cells', tone: 'bg-veil/15 text-night ring-1 ring-veil/50' },
  done: { label: 'Finished', tone: 'bg-ok/10 text-ok ring-1 ring-ok/40' },
  cancelled: { label: 'Cancelled', tone: 'bg-warn/10 text-warn ring-1 ring-warn/40' },
  failed: { label: 'Failed', tone: 'bg-bad/10 text-bad ring-1 ring-bad/40' },
  interrupted: { label: 'Interrupted', tone: 'bg-warn/10 text-warn ring-1 ring-warn/40' },
};

export function RunStateBadge({ state }: { state: RunState }) {
  const s = STATES[state] ?? { label: state, tone: 'bg-line text-ink' };
  return (
    <span data-testid="run-state" data-state={state} className={`inline-flex items-center gap-1.5 whitespace-nowrap rounded-full px-2.5 py-0.5 text-xs font-medium ${s.tone}`}>
      {state === 'running' && <span className="h-1.5 w-1.5 animate-pulse rounded-full bg-veil" aria-hidden />}
      {s.label}
    </span>
  );
}

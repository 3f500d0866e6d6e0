import { StatePill } from '../../../components/ui/StateBadge';
import type { RunState } from '../types';

// 'interrupted': a run a restart stopped mid-fit (server/tomography/service.ts); no result kept
const STATES: Record<RunState, { label: string; tone: string }> = {
  queued: { label: 'Waiting', tone: 'bg-line text-ink' },
  running: { label: 'Fitting cells', tone: 'bg-veil/15 text-night ring-1 ring-veil/50' },
  done: { label: 'Finished', tone: 'bg-ok/10 text-ok ring-1 ring-ok/40' },
  cancelled: { label: 'Cancelled', tone: 'bg-warn/10 text-warn ring-1 ring-warn/40' },
  failed: { label: 'Failed', tone: 'bg-bad/10 text-bad ring-1 ring-bad/40' },
  interrupted: { label: 'Interrupted', tone: 'bg-warn/10 text-warn ring-1 ring-warn/40' },
};

export function RunStateBadge({ state }: { state: RunState }) {
  const s = STATES[state] ?? { label: state, tone: 'bg-line text-ink' };
  return <StatePill testId="run-state" state={state} label={s.label} tone={s.tone} working={state === 'running'} />;
}

import { ProgressBar } from '../../../components/ui/ProgressBar';
import { formatCount } from '../../../lib/format';
import { duration } from '../sky/format';
import type { Run } from '../types';

/** Cells fitted of the total and the time left, while a run is queued or running. */
export function RunProgress({ run }: { run: Run }) {
  const { cellsDone, cellsTotal, etaSeconds } = run.progress;
  if (run.state === 'queued') return <ProgressBar label={`Run ${run.id}: waiting for the run ahead`} done={0} total={null} detail="queued" />;
  if (cellsTotal === 0) return <ProgressBar label={`Run ${run.id}: gathering the approved stars`} done={0} total={null} detail="reading the catalog" />;
  return (
    <div data-testid="run-progress" data-done={cellsDone} data-total={cellsTotal}>
      <ProgressBar
        label={`Run ${run.id}: fitting cells`}
        done={cellsDone}
        total={cellsTotal}
        detail={`${formatCount(cellsDone)} of ${formatCount(cellsTotal)} cells · ${etaSeconds == null ? 'estimating time left' : `about ${duration(etaSeconds)} left`}`}
      />
    </div>
  );
}

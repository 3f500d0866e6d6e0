import { Link, useLocation, useParams } from 'react-router-dom';
import { Notice } from '../../../components/ui/primitives';
import { useBatchesLabel } from '../components/BatchesNavLabel';
import { BatchDetail } from '../components/BatchDetail';
import { DecisionNote } from '../components/DecisionNote';

export function BatchPage() {
  const { id } = useParams();
  const location = useLocation();
  const label = useBatchesLabel();
  const n = Number(id);
  const seenBefore = !!(location.state as { seenBefore?: boolean } | null)?.seenBefore;
  return (
    <div className="space-y-4">
      <Link to="/batches" className="text-sm text-veil underline-offset-2 hover:underline">
        ← {label}
      </Link>
      {Number.isInteger(n) && n > 0 && <DecisionNote batchId={n} />}
      {Number.isInteger(n) && n > 0 ? <BatchDetail id={n} seenBefore={seenBefore} /> : <Notice tone="bad">“{id}” is not a batch number.</Notice>}
    </div>
  );
}

import { Link, useParams } from 'react-router-dom';
import { Notice } from '../../../components/ui/primitives';
import { can } from '../../../lib/roles';
import { useMe } from '../../auth/api/me';
import { BatchReview } from '../components/BatchReview';
import { CalibrationPanel } from '../../calibration/components/CalibrationPanel';

export function BatchReviewPage() {
  const { id } = useParams();
  const { data: me } = useMe();
  const n = Number(id);
  const curator = can(me, ['curator']);
  return (
    <div className="space-y-4">
      <Link to={curator ? '/review' : `/batches/${n}`} className="text-sm text-veil underline-offset-2 hover:underline">
        ← {curator ? 'Review queue' : 'The batch'}
      </Link>
      {Number.isInteger(n) && n > 0 ? <BatchReview key={n} batchId={n} /> : <Notice tone="bad">“{id}” is not a batch number.</Notice>}
      {Number.isInteger(n) && n > 0 && <CalibrationPanel batchId={n} />}
    </div>
  );
}

import type { ReactNode } from 'react';
import { Link, useParams } from 'react-router-dom';
import { Notice } from '../../../components/ui/primitives';
import { can } from '../../../lib/roles';
import { useMe } from '../../../lib/api/me';
import { BatchReview } from '../components/BatchReview';

/**
 * A batch's review page. `calibration` draws the batch's calibration below the table: another
 * feature's panel, handed in by the app (src/app/pages/) so features never import each other.
 */
export function BatchReviewPage({ calibration }: { calibration?: (batchId: number) => ReactNode }) {
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
      {Number.isInteger(n) && n > 0 && calibration?.(n)}
    </div>
  );
}

import { Card, PageTitle } from '../../../components/ui/primitives';
import { ReviewQueue } from '../components/ReviewQueue';

export function ReviewQueuePage() {
  return (
    <div className="space-y-6">
      <PageTitle sub="Checked batches waiting for a curator, and those already decided. Open one to read, correct and approve its measurements.">Review</PageTitle>
      <Card>
        <ReviewQueue />
      </Card>
    </div>
  );
}

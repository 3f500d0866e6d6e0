import { Link } from 'react-router-dom';
import { Card, PageTitle } from '../../../components/ui/primitives';
import { useMe } from '../../../lib/api/me';
import { BatchList } from '../components/BatchList';
import { useBatchesLabel } from '../components/BatchesNavLabel';

export function BatchesPage() {
  const { data: me } = useMe();
  const title = useBatchesLabel();
  const own = me?.role === 'observer';
  return (
    <div className="space-y-6">
      <PageTitle
        sub={
          <>
            {own ? 'The files you have sent and where each one stands.' : 'Every batch sent by every observer, newest first.'}{' '}
            <Link className="text-veil underline underline-offset-2" to="/upload">
              Upload a batch
            </Link>
          </>
        }
      >
        {title}
      </PageTitle>
      <Card>
        <BatchList showUploader={!own} />
      </Card>
    </div>
  );
}

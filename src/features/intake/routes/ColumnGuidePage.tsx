import { Link } from 'react-router-dom';
import { Card, Notice, PageTitle } from '../../../components/ui/primitives';
import { useIntakeColumns } from '../api/columns';
import { templateCsvUrl } from '../../../lib/api/downloads';
import { ColumnGuideTable } from '../components/ColumnGuideTable';
import { Conventions } from '../components/Conventions';

export function ColumnGuidePage() {
  const columns = useIntakeColumns();
  return (
    <div className="space-y-6">
      <PageTitle
        sub={
          <>
            What each column of an uploaded CSV means and how it must be written.{' '}
            <a className="text-veil underline underline-offset-2" href={templateCsvUrl} download>
              Template CSV
            </a>{' '}
            · <Link className="text-veil underline underline-offset-2" to="/upload">Upload a batch</Link>
          </>
        }
      >
        Column guide
      </PageTitle>
      <Card title="Conventions">
        {columns.data ? (
          <Conventions fromServer={columns.data.conventions} className="grid gap-x-8 gap-y-3 md:grid-cols-2 xl:grid-cols-3" />
        ) : (
          !columns.error && <p className="text-sm text-muted">Loading…</p>
        )}
      </Card>
      <Card title="Columns">
        {columns.isPending && <p className="text-sm text-muted">Loading…</p>}
        {columns.error && <Notice tone="bad">{columns.error.message}</Notice>}
        {columns.data && <ColumnGuideTable columns={columns.data.columns} />}
      </Card>
    </div>
  );
}

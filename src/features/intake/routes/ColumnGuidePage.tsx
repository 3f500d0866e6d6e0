import { Link } from 'react-router-dom';
import { Card, Notice, PageTitle } from '../../../components/ui/primitives';
import { useIntakeColumns } from '../api/columns';
import { templateCsvUrl } from '../api/downloads';
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
      <div className="grid gap-6 xl:grid-cols-[1fr_22rem]">
        <Card title="Columns">
          {columns.isPending && <p className="text-sm text-muted">Loading…</p>}
          {columns.error && <Notice tone="bad">{columns.error.message}</Notice>}
          {columns.data && <ColumnGuideTable columns={columns.data.columns} />}
        </Card>
        <Card title="Conventions">
          <Conventions fromServer={columns.data?.conventions} />
        </Card>
      </div>
    </div>
  );
}

import { Link } from 'react-router-dom';
import { Card, PageTitle } from '../../../components/ui/primitives';
import { templateCsvUrl } from '../../../lib/api/downloads';
import { UploadPanel } from '../components/UploadPanel';

export function UploadPage() {
  return (
    <div className="space-y-6">
      <PageTitle sub="Each file is kept exactly as received; its rows are checked, tied to known stars and shown to you before anything enters the catalog.">
        Upload a batch
      </PageTitle>
      <div className="grid gap-6 lg:grid-cols-[1fr_20rem]">
        <UploadPanel />
        <Card title="Before you send">
          <ul className="space-y-3 text-sm text-ink">
            <li>
              <a className="font-medium text-veil underline underline-offset-2" href={templateCsvUrl} download>
                Download the template CSV
              </a>{' '}
              — every column Starveil reads, with one example row.
            </li>
            <li>
              <Link className="font-medium text-veil underline underline-offset-2" to="/upload/columns">
                Read the column guide
              </Link>{' '}
              — names, units, rules and the other header spellings recognised.
            </li>
            <li className="text-muted">Headers that are not recognised can be matched by hand after the upload. Sending the same file twice opens the batch it made the first time.</li>
          </ul>
        </Card>
      </div>
    </div>
  );
}

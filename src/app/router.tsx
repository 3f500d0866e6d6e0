import { createBrowserRouter, Link } from 'react-router-dom';
import { Layout } from './Layout';
import { RequireRole } from './RequireRole';
import { SignInPage } from '../features/auth/routes/SignIn';
import { OverviewPage } from '../features/overview/routes/OverviewPage';
import { PeoplePage } from '../features/admin/routes/PeoplePage';
import { AccountPage } from '../features/account/routes/AccountPage';
import { UploadPage } from '../features/intake/routes/UploadPage';
import { ColumnGuidePage } from '../features/intake/routes/ColumnGuidePage';
import { BatchesPage } from '../features/intake/routes/BatchesPage';
import { BatchPage } from '../features/intake/routes/BatchPage';
import { ResetRequestPage } from '../features/auth/routes/ResetRequest';
import { ResetConfirmPage } from '../features/auth/routes/ResetConfirm';
import { OutboxPage } from '../features/outbox/routes/OutboxPage';
import { SkyPage } from '../features/tomography/routes/SkyPage';
import { SightlinePage } from '../features/tomography/routes/SightlinePage';
import { RunsPage } from '../features/tomography/routes/RunsPage';
import { ReviewQueuePage } from '../features/review/routes/ReviewQueuePage';
import { BatchReviewPage } from '../features/review/routes/BatchReviewPage';
import { CatalogPage } from '../features/catalog/routes/CatalogPage';
import { StarPage } from '../features/catalog/routes/StarPage';
import { TokensPage } from '../features/tokens/routes/TokensPage';
import { MasksPage } from '../features/masks/routes/MasksPage';
import { ApiPage } from '../features/apidocs/routes/ApiPage';
import { StandardStarsPage } from '../features/calibration/routes/StandardStarsPage';
import { InstrumentsPage } from '../features/instruments/routes/InstrumentsPage';

export const router = createBrowserRouter([
  { path: '/sign-in', element: <SignInPage /> },
  { path: '/forgot-password', element: <ResetRequestPage /> },
  { path: '/reset-password', element: <ResetConfirmPage /> },
  {
    element: (
      <RequireRole roles="signed-in">
        <Layout />
      </RequireRole>
    ),
    children: [
      { index: true, element: <OverviewPage /> },
      { path: 'account', element: <AccountPage /> },
      { path: 'upload', element: <RequireRole roles={['observer', 'curator']}><UploadPage /></RequireRole> },
      { path: 'upload/columns', element: <ColumnGuidePage /> },
      { path: 'batches', element: <RequireRole roles={['observer', 'curator']}><BatchesPage /></RequireRole> },
      { path: 'batches/:id', element: <RequireRole roles={['observer', 'curator']}><BatchPage /></RequireRole> },
      { path: 'review', element: <RequireRole roles={['curator']}><ReviewQueuePage /></RequireRole> },
      { path: 'review/batches/:id', element: <RequireRole roles={['observer', 'curator']}><BatchReviewPage /></RequireRole> },
      { path: 'catalog', element: <CatalogPage /> },
      { path: 'instruments', element: <InstrumentsPage /> },
      { path: 'catalog/stars/:id', element: <StarPage /> },
      { path: 'calibration/standards', element: <StandardStarsPage /> },
      { path: 'sky', element: <SkyPage /> },
      { path: 'sky/:nside/:ipix', element: <SightlinePage /> },
      { path: 'runs', element: <RunsPage /> },
      { path: 'masks', element: <MasksPage /> },
      { path: 'tokens', element: <TokensPage /> },
      { path: 'reference', element: <ApiPage /> },
      { path: 'admin/people', element: <RequireRole roles={['admin']}><PeoplePage /></RequireRole> },
      { path: 'admin/outbox', element: <RequireRole roles={['admin']}><OutboxPage /></RequireRole> },
      { path: '*', element: <div className="text-sm text-muted">There is no page here. <Link className="text-veil underline" to="/">Back to the overview</Link></div> },
    ],
  },
]);

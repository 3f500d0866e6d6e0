import { lazy, Suspense, type ComponentType } from 'react';
import { createBrowserRouter, Link } from 'react-router-dom';
import { Layout } from './Layout';
import { RequireRole } from './RequireRole';

/**
 * Pages load on first visit, each in its own chunk: `lazyPage(() => import(file), 'ExportName')`
 * gives a component that shows a short loading line until its code has arrived.
 */
function lazyPage<K extends string>(load: () => Promise<Record<K, ComponentType>>, name: K): ComponentType {
  const Page = lazy<ComponentType>(() => load().then((m) => ({ default: m[name] })));
  return function LazyPage() {
    return (
      <Suspense fallback={<div className="p-8 text-sm text-muted">Loading…</div>}>
        <Page />
      </Suspense>
    );
  };
}

const SignInPage = lazyPage(() => import('../features/auth/routes/SignIn'), 'SignInPage');
const OverviewPage = lazyPage(() => import('../features/overview/routes/OverviewPage'), 'OverviewPage');
const PeoplePage = lazyPage(() => import('../features/admin/routes/PeoplePage'), 'PeoplePage');
const AccountPage = lazyPage(() => import('../features/account/routes/AccountPage'), 'AccountPage');
const UploadPage = lazyPage(() => import('../features/intake/routes/UploadPage'), 'UploadPage');
const ColumnGuidePage = lazyPage(() => import('../features/intake/routes/ColumnGuidePage'), 'ColumnGuidePage');
const BatchesPage = lazyPage(() => import('../features/intake/routes/BatchesPage'), 'BatchesPage');
const BatchPage = lazyPage(() => import('../features/intake/routes/BatchPage'), 'BatchPage');
const ResetRequestPage = lazyPage(() => import('../features/auth/routes/ResetRequest'), 'ResetRequestPage');
const ResetConfirmPage = lazyPage(() => import('../features/auth/routes/ResetConfirm'), 'ResetConfirmPage');
const OutboxPage = lazyPage(() => import('../features/outbox/routes/OutboxPage'), 'OutboxPage');
const SkyPage = lazyPage(() => import('../features/tomography/routes/SkyPage'), 'SkyPage');
const SightlinePage = lazyPage(() => import('../features/tomography/routes/SightlinePage'), 'SightlinePage');
const RunsPage = lazyPage(() => import('../features/tomography/routes/RunsPage'), 'RunsPage');
const ReviewQueuePage = lazyPage(() => import('../features/review/routes/ReviewQueuePage'), 'ReviewQueuePage');
const BatchReviewPage = lazyPage(() => import('./pages/BatchReviewWithCalibration'), 'BatchReviewWithCalibration');
const CatalogPage = lazyPage(() => import('../features/catalog/routes/CatalogPage'), 'CatalogPage');
const StarPage = lazyPage(() => import('../features/catalog/routes/StarPage'), 'StarPage');
const TokensPage = lazyPage(() => import('../features/tokens/routes/TokensPage'), 'TokensPage');
const MasksPage = lazyPage(() => import('../features/masks/routes/MasksPage'), 'MasksPage');
const ApiPage = lazyPage(() => import('../features/apidocs/routes/ApiPage'), 'ApiPage');
const StandardStarsPage = lazyPage(() => import('../features/calibration/routes/StandardStarsPage'), 'StandardStarsPage');
const InstrumentsPage = lazyPage(() => import('./pages/InstrumentsWithCalibrations'), 'InstrumentsWithCalibrations');

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

import { createBrowserRouter, Link } from 'react-router-dom';
import { Layout } from './Layout';
import { RequireRole } from './RequireRole';
import { SignInPage } from '../features/auth/routes/SignIn';
import { OverviewPage } from '../features/overview/routes/OverviewPage';
import { PeoplePage } from '../features/admin/routes/PeoplePage';
import { AccountPage } from '../features/account/routes/AccountPage';

export const router = createBrowserRouter([
  { path: '/sign-in', element: <SignInPage /> },
  {
    element: (
      <RequireRole roles="signed-in">
        <Layout />
      </RequireRole>
    ),
    children: [
      { index: true, element: <OverviewPage /> },
      { path: 'account', element: <AccountPage /> },
      { path: 'admin/people', element: <RequireRole roles={['admin']}><PeoplePage /></RequireRole> },
      { path: '*', element: <div className="text-sm text-muted">There is no page here. <Link className="text-veil underline" to="/">Back to the overview</Link></div> },
    ],
  },
]);

import { Navigate, type RouteObject } from 'react-router-dom';
import { AdminPage } from '@/features/admin/AdminPage.tsx';
import { SignInPage } from '@/features/auth/SignInPage.tsx';
import { OutboxPage } from '@/features/outbox/OutboxPage.tsx';
import { RegimeCallsPage } from '@/features/regime-calls/RegimeCallsPage.tsx';
import { RunViewPage } from '@/features/run-view/RunViewPage.tsx';
import { RunsPage } from '@/features/runs/RunsPage.tsx';
import { ScenariosPage } from '@/features/scenarios/ScenariosPage.tsx';
import { SnapshotsPage } from '@/features/snapshots/SnapshotsPage.tsx';
import { Layout } from './Layout.tsx';
import { NotFoundPage } from './NotFoundPage.tsx';
import { ADMIN_SCREEN_ROUTES, RequireAccess, RequireSignIn } from './RequireSignIn.tsx';

/** The route table: one entry per screen of PRODUCT.md. */
export const routes: RouteObject[] = [
  { path: '/sign-in', element: <SignInPage /> },
  {
    path: '/',
    element: (
      <RequireSignIn>
        <Layout />
      </RequireSignIn>
    ),
    children: [
      { index: true, element: <Navigate to="/runs" replace /> },
      { path: 'runs', element: <RunsPage /> },
      { path: 'runs/:runId', element: <RunViewPage /> },
      { path: 'scenarios', element: <ScenariosPage /> },
      { path: 'regime-calls', element: <RegimeCallsPage /> },
      { path: 'snapshots', element: <SnapshotsPage /> },
      {
        path: 'admin',
        element: (
          <RequireAccess anyOf={ADMIN_SCREEN_ROUTES}>
            <AdminPage />
          </RequireAccess>
        ),
      },
      { path: 'outbox', element: <OutboxPage /> },
      { path: '*', element: <NotFoundPage /> },
    ],
  },
];

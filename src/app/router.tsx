import { createBrowserRouter } from 'react-router';
import { NotFound } from '../components/not-found';
import { ApiError } from '../lib/api';
import { MailboxPage } from '../features/mailbox/components/mailbox-page';
import { CreateRigForm } from '../features/rigs/components/create-rig-form';
import { RigList } from '../features/rigs/components/rig-list';
import { replaceSession, sessionQueryOptions } from '../lib/session';
import { sessionKeys } from '../lib/session-keys';
import { ResetPasswordPage } from '../features/session/components/reset-password-page';
import { ResetRequestPage } from '../features/session/components/reset-request-page';
import { SignInPage } from '../features/session/components/sign-in-page';
import { AppLayout, AppLoading } from './layout/app-layout';
import { queryClient } from './query-client';
import { InvitationRoute } from './routes/invitation-route';
import { SafetyRoute } from './routes/safety-route';
import { AppRouteError, RigRouteError } from './routes/route-errors';
import {
  MembersRoute,
  RigRoute,
  SettingsRoute,
  StationsRoute,
  membersLoader,
  rigListLoader,
  rigLoader,
} from './routes/rig-routes';
import { requireUserLoader, rootLoader, signInLoader } from './routes/session-loaders';
import {
  CaptureRoute,
  CaptureRouteError,
  CaptureSetupRoute,
  CapturesRoute,
  capturesLoader,
  FrameRoute,
  OverviewRoute,
  TimelineRoute,
  UploadRoute,
  captureLoader,
  frameLoader,
  onlyOnPathChange,
  overviewLoader,
  setupLoader,
  timelineLoader,
  uploadLoader,
} from './routes/capture-routes';
import { discoveryRoutes } from './routes/discovery-routes';
import { callRoutes } from './routes/call-routes';
import { faultRoutes } from './routes/fault-routes';
import { noteRoutes } from './routes/note-routes';
import { fieldMapRoutes } from './routes/field-map-routes';

export const router = createBrowserRouter([
  {
    id: 'root',
    loader: rootLoader,
    // painted while the first loaders run on a full page load
    hydrateFallbackElement: <AppLoading />,
    errorElement: <AppRouteError />,
    children: [
      { path: 'sign-in', loader: signInLoader, element: <SignInPage /> },
      { path: 'reset-password', element: <ResetRequestPage /> },
      { path: 'reset-password/:token', element: <ResetPasswordPage /> },
      { path: 'invitations/:token', element: <InvitationRoute /> },
      {
        loader: requireUserLoader,
        element: <AppLayout />,
        children: [
          {
            errorElement: <AppRouteError />,
            children: [
              { index: true, loader: rigListLoader, element: <RigList /> },
              { path: 'rigs/new', element: <CreateRigForm /> },
              {
                path: 'rigs/:rigId',
                loader: rigLoader,
                element: <RigRoute />,
                errorElement: <RigRouteError />,
                children: [
                  { index: true, element: <StationsRoute /> },
                  { path: 'settings', element: <SettingsRoute /> },
                  { path: 'members', loader: membersLoader, element: <MembersRoute /> },
                  { path: 'captures', loader: capturesLoader, element: <CapturesRoute /> },
                  ...fieldMapRoutes,
                ],
              },
              { path: 'rigs/:rigId/captures/new', loader: uploadLoader, element: <UploadRoute />, errorElement: <RigRouteError /> },
              {
                path: 'rigs/:rigId/captures/:captureId',
                loader: captureLoader,
                element: <CaptureRoute />,
                errorElement: <CaptureRouteError />,
                shouldRevalidate: onlyOnPathChange,
                children: [
                  { index: true, loader: overviewLoader, element: <OverviewRoute /> },
                  { path: 'setup', loader: setupLoader, element: <CaptureSetupRoute /> },
                  { path: 'timeline', loader: timelineLoader, element: <TimelineRoute />, shouldRevalidate: onlyOnPathChange, handle: { wide: true } },
                  { path: 'frames/:frameId', loader: frameLoader, element: <FrameRoute />, errorElement: <CaptureRouteError /> },
                  ...callRoutes,
                  ...faultRoutes,
                  ...noteRoutes,
                  ...discoveryRoutes,
                ],
              },
              { path: 'probing-safety', element: <SafetyRoute /> },
              { path: 'dev/mailbox', element: <MailboxPage /> },
              { path: '*', element: <NotFound /> },
            ],
          },
        ],
      },
    ],
  },
]);

// A session that ends while the app is open (expiry, sign-out elsewhere) sends the user to sign in.
queryClient.getQueryCache().subscribe((event) => {
  if (event.type !== 'updated' || event.action.type !== 'error') return;
  const error = event.action.error;
  if (!(error instanceof ApiError) || error.status !== 401) return;
  if (event.query.queryKey[0] === sessionKeys.all[0]) return;
  const csrfToken = queryClient.getQueryData(sessionQueryOptions().queryKey)?.csrfToken ?? '';
  replaceSession(queryClient, { user: null, csrfToken });
  void queryClient.invalidateQueries({ queryKey: sessionKeys.current() });
  const here = window.location.pathname + window.location.search;
  void router.navigate(`/sign-in?next=${encodeURIComponent(here)}`, { replace: true });
});

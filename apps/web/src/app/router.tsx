import { createBrowserRouter, Navigate } from 'react-router-dom';
import { paths } from '../config/paths.js';
import { AcceptInviteRoute } from './routes/accept-invite.js';
import { AdminOutboxRoute } from './routes/admin/outbox.js';
import { AdminUsersRoute } from './routes/admin/users.js';
import { AppShell } from './routes/app-shell.js';
import { AuditRoute } from './routes/audit.js';
import { ForgotPasswordRoute } from './routes/forgot-password.js';
import { NewStudyRoute } from './routes/new-study.js';
import { NotFoundRoute } from './routes/not-found.js';
import { ResetPasswordRoute } from './routes/reset-password.js';
import { RouteErrorBoundary } from './routes/route-error.js';
import { SignInRoute } from './routes/sign-in.js';
import { StudiesRoute } from './routes/studies.js';
import { StudyAlertsRoute } from './routes/study/study-alerts.js';
import { StudyAnalysisRoute } from './routes/study/study-analysis.js';
import { StudyAuditRoute } from './routes/study/study-audit.js';
import { StudyBalanceRoute } from './routes/study/study-balance.js';
import { StudyDesignRoute } from './routes/study/study-design.js';
import { StudyEnrollRoute } from './routes/study/study-enroll.js';
import { StudyImportRoute } from './routes/study/study-import.js';
import { StudyLayout } from './routes/study/study-layout.js';
import { StudyOutcomesRoute } from './routes/study/study-outcomes.js';
import { StudyOverviewRoute } from './routes/study/study-overview.js';
import { StudyParticipantRoute } from './routes/study/study-participant.js';
import { StudyParticipantsRoute } from './routes/study/study-participants.js';

/*
 * Study sections are child routes of /studies/:studyId. To add a page, replace its
 * placeholder element here; the tab list and who sees it live in study/study-tabs.ts and
 * lib/authorization.ts.
 */
export const router = createBrowserRouter([
  {
    errorElement: <RouteErrorBoundary />,
    children: [
      { path: paths.auth.signIn.path, element: <SignInRoute /> },
      { path: paths.auth.forgotPassword.path, element: <ForgotPasswordRoute /> },
      { path: paths.auth.resetPassword.path, element: <ResetPasswordRoute /> },
      { path: paths.auth.acceptInvite.path, element: <AcceptInviteRoute /> },
      {
        element: <AppShell />,
        children: [
          { index: true, element: <Navigate to={paths.studies.list.href()} replace /> },
          { path: paths.studies.list.path, element: <StudiesRoute /> },
          { path: paths.studies.create.path, element: <NewStudyRoute /> },
          {
            path: paths.studies.study.path,
            element: <StudyLayout />,
            children: [
              { index: true, element: <StudyOverviewRoute /> },
              { path: 'participants', element: <StudyParticipantsRoute /> },
              { path: paths.participants.enroll.path, element: <StudyEnrollRoute /> },
              { path: paths.participants.import.path, element: <StudyImportRoute /> },
              { path: paths.participants.detail.path, element: <StudyParticipantRoute /> },
              { path: 'outcomes', element: <StudyOutcomesRoute /> },
              { path: 'balance', element: <StudyBalanceRoute /> },
              { path: 'alerts', element: <StudyAlertsRoute /> },
              { path: 'analysis', element: <StudyAnalysisRoute /> },
              { path: 'design', element: <StudyDesignRoute /> },
              { path: 'audit', element: <StudyAuditRoute /> },
              { path: '*', element: <NotFoundRoute /> },
            ],
          },
          { path: paths.audit.path, element: <AuditRoute /> },
          { path: paths.admin.users.path, element: <AdminUsersRoute /> },
          { path: paths.admin.outbox.path, element: <AdminOutboxRoute /> },
          { path: '*', element: <NotFoundRoute /> },
        ],
      },
    ],
  },
]);

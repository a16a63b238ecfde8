import { createBrowserRouter } from "react-router-dom";
import { AppShell } from "../components/layout/app-shell";
import { RequireAuth, SignedOutOnly } from "../features/auth/components/require-auth";
import { HomePage } from "./routes/home/home";
import { NotFoundPage } from "./routes/home/not-found";
import { SignInPage } from "./routes/auth/sign-in";
import { SignUpPage } from "./routes/auth/sign-up";
import { ApplyPage } from "./routes/auth/apply";
import { AcceptInvitePage } from "./routes/auth/accept-invite";
import { ForgotPasswordPage } from "./routes/auth/forgot-password";
import { ResetPasswordPage } from "./routes/auth/reset-password";
import { TeamPage } from "./routes/team/team";
import { BillingPage } from "./routes/billing/billing-page";
import { ReceiptPage } from "./routes/billing/receipt-page";
import { QueuePage } from "./routes/queue/queue-page";
import { EarningsPage } from "./routes/earnings/earnings-page";
import { AdminPricingPage } from "./routes/admin-pricing/admin-pricing-page";
import { AdminExpertsPage } from "./routes/admin/experts";
import { CasePage } from "./routes/cases/case-page";
import { CaseDraftPage } from "./routes/cases/draft";
import { CasesListPage } from "./routes/cases/list";
import { CasebookSearchPage } from "./routes/casebook/search-page";
import { CasebookEntryPage } from "./routes/casebook/entry-page";
import { CaseReportPage } from "./routes/report/report-page";
import { NoticeSettingsPage } from "./routes/settings/notices-page";

/**
 * All client routes. Each area adds its pages here: signed-in pages go inside the RequireAuth
 * route (signed-out visitors are sent to sign-in); `RequireAuth roles` narrows a group to roles.
 */
export const router = createBrowserRouter([
  {
    path: "/",
    element: <AppShell />,
    children: [
      {
        element: <SignedOutOnly />,
        children: [
          { path: "sign-in", element: <SignInPage /> },
          { path: "sign-up", element: <SignUpPage /> },
          { path: "apply", element: <ApplyPage /> },
          { path: "forgot-password", element: <ForgotPasswordPage /> },
        ],
      },
      { path: "accept-invite", element: <AcceptInvitePage /> },
      { path: "reset-password", element: <ResetPasswordPage /> },
      {
        element: <RequireAuth />,
        children: [
          { index: true, element: <HomePage /> },
          { path: "cases", element: <CasesListPage /> },
          // one element for both addresses, so the first save of a new case keeps the page's state
          { element: <CaseDraftPage />, children: [{ path: "cases/new" }, { path: "cases/:id/edit" }] },
          { path: "cases/:id", element: <CasePage /> },
          { path: "cases/:id/report", element: <CaseReportPage /> },
          { path: "casebook", element: <CasebookSearchPage /> },
          { path: "casebook/:id", element: <CasebookEntryPage /> },
          { path: "settings/notices", element: <NoticeSettingsPage /> },
          {
            element: <RequireAuth roles={["owner", "technician"]} />,
            children: [{ path: "team", element: <TeamPage /> }],
          },
          {
            // admins read any shop's billing (?shopId=…) and receipts
            element: <RequireAuth roles={["owner", "admin"]} />,
            children: [
              { path: "billing", element: <BillingPage /> },
              { path: "billing/receipts/:paymentId", element: <ReceiptPage /> },
            ],
          },
          {
            element: <RequireAuth roles={["expert", "admin"]} />,
            children: [{ path: "queue", element: <QueuePage /> }],
          },
          { element: <RequireAuth roles={["expert"]} />, children: [{ path: "earnings", element: <EarningsPage /> }] },
          {
            element: <RequireAuth roles={["admin"]} />,
            children: [{ path: "admin/pricing", element: <AdminPricingPage /> }],
          },
          {
            element: <RequireAuth roles={["admin"]} />,
            children: [{ path: "admin/experts", element: <AdminExpertsPage /> }],
          },
        ],
      },
      { path: "*", element: <NotFoundPage /> },
    ],
  },
]);

import { createBrowserRouter } from "react-router-dom";
import { AppShell } from "../components/layout/app-shell";
import { HomePage } from "./routes/home";
import { CasePage } from "./routes/cases/case-page";
import { CaseDraftPage } from "./routes/cases/draft";
import { CasesListPage } from "./routes/cases/list";

/** All client routes. Each area adds its pages here. */
export const router = createBrowserRouter([
  {
    path: "/",
    element: <AppShell />,
    children: [
      { index: true, element: <HomePage /> },
      { path: "cases", element: <CasesListPage /> },
      // one element for both addresses, so the first save of a new case keeps the page's state
      { element: <CaseDraftPage />, children: [{ path: "cases/new" }, { path: "cases/:id/edit" }] },
      { path: "cases/:id", element: <CasePage /> },
    ],
  },
]);

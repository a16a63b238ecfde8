import { Navigate, Outlet, useLocation } from "react-router-dom";
import type { Role } from "../../../../shared/domain/case-status";
import { useMe } from "../api/get-me";
import { authPages } from "../api/paths";

/**
 * Layout route for every signed-in page: signed-out visitors are sent to sign-in (and come back
 * afterwards). With `roles`, other roles see a short explanation instead of the page; the server
 * refuses them anyway.
 */
export function RequireAuth({ roles }: { roles?: readonly Role[] }) {
  const me = useMe();
  const location = useLocation();
  if (me.isPending) return <p className="text-ink-500">Loading…</p>;
  if (me.isError)
    return (
      <p role="alert" className="text-alarm-600">
        Burnline could not be reached. Check the connection and reload the page.
      </p>
    );
  if (!me.data) return <Navigate to={authPages.signIn} replace state={{ from: location.pathname + location.search }} />;
  if (roles && !roles.includes(me.data.role)) {
    return (
      <div className="rounded-xl border border-ink-200 bg-white p-5">
        <h1 className="text-xl font-bold">Not available for your role</h1>
        <p className="mt-2 text-ink-600">
          This page is for {roles.join(" or ")} accounts. You are signed in as {me.data.role}.
        </p>
      </div>
    );
  }
  return <Outlet />;
}

/** Layout route for the signed-out pages: a signed-in user is sent home. */
export function SignedOutOnly() {
  const me = useMe();
  if (me.isPending) return <p className="text-ink-500">Loading…</p>;
  if (me.data) return <Navigate to="/" replace />;
  return <Outlet />;
}

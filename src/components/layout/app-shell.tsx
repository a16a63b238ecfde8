import { useCallback } from "react";
import { NavLink, Outlet, Link } from "react-router-dom";
import { useQueryClient } from "@tanstack/react-query";
import { Wordmark } from "./logo";
import { useMe } from "../../features/auth/api/get-me";
import { SignOutButton } from "../../features/auth/components/sign-out-button";
import { NotificationsMenu } from "../../features/notifications/components/notifications-menu";

export interface NavItem {
  to: string;
  label: string;
  roles?: string[];
}

/** Navigation per role; features add their entries here. */
export const navItems: NavItem[] = [
  { to: "/", label: "Home" },
  { to: "/cases", label: "Cases", roles: ["technician", "owner", "admin"] },
  { to: "/casebook", label: "Casebook", roles: ["technician", "owner", "expert", "admin"] },
  { to: "/team", label: "Team", roles: ["owner", "technician"] },
  { to: "/admin/experts", label: "Experts", roles: ["admin"] },
  { to: "/queue", label: "Queue", roles: ["expert", "admin"] },
  { to: "/earnings", label: "Earnings", roles: ["expert"] },
  { to: "/billing", label: "Billing", roles: ["owner"] },
  { to: "/admin/pricing", label: "Pricing", roles: ["admin"] },
];

export function AppShell() {
  const me = useMe();
  const qc = useQueryClient();
  // a pushed notice (a new message, a mark, a state change) changes the case lists' unread counts
  const onNotice = useCallback(() => void qc.invalidateQueries({ queryKey: ["cases", "list"] }), [qc]);
  const items = navItems.filter((i) => !i.roles || (me.data && i.roles.includes(me.data.role)));
  return (
    <div className="min-h-full flex flex-col">
      <header className="no-print bg-ink-900 text-ink-50">
        <div className="mx-auto max-w-7xl px-4 py-3 flex flex-wrap items-center gap-x-6 gap-y-2">
          <Link to="/" className="text-ink-50">
            <Wordmark />
          </Link>
          <nav aria-label="Main" className="flex flex-wrap gap-1 text-sm">
            {items.map((i) => (
              <NavLink
                key={i.to}
                to={i.to}
                end={i.to === "/"}
                className={({ isActive }) =>
                  `rounded-md px-3 py-2 ${isActive ? "bg-ink-700 text-white" : "text-ink-200 hover:bg-ink-800"}`
                }
              >
                {i.label}
              </NavLink>
            ))}
          </nav>
          <div className="ml-auto flex items-center gap-2 text-sm text-ink-200">
            {me.data ? (
              <>
                <NotificationsMenu signedIn onNotice={onNotice} />
                <span className="hidden sm:inline">{`${me.data.name} · ${me.data.role}`}</span>
                <SignOutButton />
              </>
            ) : (
              <Link to="/sign-in" className="rounded-md px-3 py-2 text-ink-200 hover:bg-ink-800">
                Sign in
              </Link>
            )}
          </div>
        </div>
      </header>
      <main className="flex-1 mx-auto w-full max-w-7xl px-4 py-6">
        <Outlet />
      </main>
    </div>
  );
}

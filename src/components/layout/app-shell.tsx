import { NavLink, Outlet, Link } from "react-router-dom";
import { Wordmark } from "./logo";
import { useMe } from "../../features/auth/api/get-me";

export interface NavItem {
  to: string;
  label: string;
  roles?: string[];
}

/** Navigation per role; features add their entries here. */
export const navItems: NavItem[] = [
  { to: "/", label: "Home" },
  { to: "/cases", label: "Cases", roles: ["technician", "owner"] },
];

export function AppShell() {
  const me = useMe();
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
          <div className="ml-auto text-sm text-ink-200">{me.data ? `${me.data.name} · ${me.data.role}` : null}</div>
        </div>
      </header>
      <main className="flex-1 mx-auto w-full max-w-7xl px-4 py-6">
        <Outlet />
      </main>
    </div>
  );
}

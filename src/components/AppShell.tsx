import { Link, NavLink, Navigate, Outlet, useLocation, useNavigate } from "react-router";
import { useHealth, useMe, useSignOut } from "../lib/queries";
import { Gauge } from "./Gauge";
import { Loading } from "./ui";

/** Signed-in pages: a dark bezel across the top, the work surface below. Sends anonymous visitors to sign in. */
export function AppShell() {
  const me = useMe();
  const health = useHealth();
  const signOut = useSignOut();
  const navigate = useNavigate();
  const location = useLocation();

  if (me.isPending) return <div className="p-8"><Loading /></div>;
  if (!me.data) return <Navigate to={`/sign-in?next=${encodeURIComponent(location.pathname + location.search)}`} replace />;

  return (
    <div className="flex min-h-full flex-col">
      <header className="bg-bezel text-dial">
        <div className="mx-auto flex max-w-6xl items-center gap-6 px-4 py-3">
          <Link to="/workshops" className="flex items-center gap-2 font-bold tracking-tight text-dial no-underline">
            <Gauge className="h-7 w-7" />
            Panelproof
          </Link>
          <nav className="flex gap-4 text-sm">
            <NavLink to="/workshops" end className={({ isActive }) => (isActive ? "text-amber-bright" : "text-dial/80 hover:text-dial")}>
              Workshops
            </NavLink>
            {health.data?.mail === "outbox" && (
              <NavLink to="/outbox" className={({ isActive }) => (isActive ? "text-amber-bright" : "text-dial/80 hover:text-dial")}>
                Outbox
              </NavLink>
            )}
          </nav>
          <div className="ml-auto flex items-center gap-3 text-sm">
            <span className="hidden text-dial/80 sm:inline" title={me.data.user.email}>
              {me.data.user.name}
            </span>
            <button
              type="button"
              className="rounded border border-dial/30 px-2 py-1 text-dial/90 hover:bg-bezel-soft"
              onClick={() => signOut.mutate(undefined, { onSuccess: () => navigate("/sign-in") })}
            >
              Sign out
            </button>
          </div>
        </div>
      </header>
      <main className="mx-auto w-full max-w-6xl flex-1 px-4 py-8">
        <Outlet />
      </main>
    </div>
  );
}

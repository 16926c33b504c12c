import { NavLink, Outlet, useParams } from "react-router";
import { ApiError } from "../lib/api";
import { useWorkshop } from "../lib/queries";
import { ErrorNote, Loading, RoleTag } from "../components/ui";

/** One workshop: its name, the member's role, and the workshop's own tabs. */
export function WorkshopLayout() {
  const { workshopId = "" } = useParams();
  const workshop = useWorkshop(workshopId);

  if (workshop.isPending) return <Loading what="Opening the workshop" />;
  if (workshop.error) {
    const missing = workshop.error instanceof ApiError && workshop.error.status === 404;
    return <ErrorNote error={missing ? new Error("This workshop does not exist, or you are not a member of it.") : workshop.error} />;
  }
  const w = workshop.data;
  const tab = ({ isActive }: { isActive: boolean }) =>
    `border-b-2 px-1 pb-2 text-sm font-semibold ${isActive ? "border-amber text-ink" : "border-transparent text-ink-soft hover:text-ink"}`;

  return (
    <div>
      <div className="mb-6 flex flex-wrap items-center gap-3">
        <h1 className="text-2xl font-bold tracking-tight">{w.name}</h1>
        <RoleTag role={w.role} />
      </div>
      <nav className="mb-8 flex gap-6 border-b border-rule" aria-label="Workshop">
        <NavLink to={`/w/${w.id}`} end className={tab}>
          Bench overview
        </NavLink>
        <NavLink to={`/w/${w.id}/recordings`} className={tab}>
          Recordings
        </NavLink>
        <NavLink to={`/w/${w.id}/panels`} className={tab}>
          Panels
        </NavLink>
        <NavLink to={`/w/${w.id}/runs`} className={tab}>
          Runs
        </NavLink>
        <NavLink to={`/w/${w.id}/members`} className={tab}>
          People
        </NavLink>
      </nav>
      <Outlet context={w} />
    </div>
  );
}

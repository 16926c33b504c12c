import { Link, useOutletContext } from "react-router";
import type { WorkshopDetail } from "../../shared/api/workshops";
import { Card } from "../components/ui";
import { useRecordings } from "../features/recordings/queries";
import { usePanels } from "../features/panels/queries";
import { useRuns } from "../features/runs/queries";

const STEPS = [
  {
    title: "Recordings",
    empty: "No reference flights yet.",
    next: "A recording is a timed stream of aircraft values. You will capture one from your simulator, import a file, or compose a scenario that reaches the rare states (a fire warning, an unsafe gear) without flying.",
  },
  {
    title: "Panels",
    empty: "No panels described yet.",
    next: "A panel lists its elements (lamps, gauge pointers, readouts, breakers, switches) and how each follows the aircraft. Describe it once; mirror-image panels reuse the description.",
  },
  {
    title: "Runs",
    empty: "No runs yet.",
    next: "A run replays a recording into a panel, virtual or wired, and keeps every moment an element showed something other than it should.",
  },
];

/** The workshop's home: what is here, and what comes next when nothing is. */
export function WorkshopHome() {
  const w = useOutletContext<WorkshopDetail>();
  const canChange = w.abilities.includes("bench.write");
  const recordings = useRecordings(w.id, false);
  const recordingCount = recordings.data?.length ?? 0;
  const panelCount = usePanels(w.id).data?.length ?? 0;
  const runCount = useRuns(w.id).data?.length ?? 0;
  return (
    <div className="grid gap-5 md:grid-cols-3">
      {STEPS.map((s, i) => (
        <Card
          key={s.title}
          title={
            <span className="flex items-center gap-2">
              <span className="grid h-6 w-6 place-items-center rounded-full border border-ink/40 font-mono text-xs">{i + 1}</span>
              {s.title}
            </span>
          }
        >
          {s.title === "Recordings" && recordingCount > 0 ? (
            <p className="font-semibold">
              {recordingCount} {recordingCount === 1 ? "recording" : "recordings"} on the bench.
            </p>
          ) : s.title === "Panels" && panelCount > 0 ? (
            <p className="font-semibold">
              {panelCount} {panelCount === 1 ? "panel" : "panels"} described.
            </p>
          ) : s.title === "Runs" && runCount > 0 ? (
            <p className="font-semibold">
              {runCount} {runCount === 1 ? "run" : "runs"} so far.
            </p>
          ) : (
            <p className="font-semibold">{s.empty}</p>
          )}
          <p className="mt-2 text-sm text-ink-soft">{s.next}</p>
          {s.title === "Recordings" && (
            <Link to={`/w/${w.id}/recordings`} className="mt-3 inline-block text-sm font-semibold text-ink underline decoration-amber/60 underline-offset-2 hover:decoration-amber">
              {canChange ? "Open recordings, upload or compose →" : "Open recordings →"}
            </Link>
          )}
          {s.title === "Panels" && (
            <Link to={`/w/${w.id}/panels`} className="mt-3 inline-block text-sm font-semibold text-ink underline decoration-amber/60 underline-offset-2 hover:decoration-amber">
              {canChange ? "Open panels, describe or import one →" : "Open panels →"}
            </Link>
          )}
          {s.title === "Runs" && (
            <Link to={`/w/${w.id}/runs`} className="mt-3 inline-block text-sm font-semibold text-ink underline decoration-amber/60 underline-offset-2 hover:decoration-amber">
              {canChange ? "Open runs, set one up →" : "Open runs →"}
            </Link>
          )}
        </Card>
      ))}
      <p className="text-sm text-ink-soft md:col-span-3">
        {w.memberCount} {w.memberCount === 1 ? "person" : "people"} in this workshop.
      </p>
    </div>
  );
}

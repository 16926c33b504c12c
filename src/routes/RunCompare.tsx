import { Link, useOutletContext, useParams } from "react-router";
import type { RunComparisonView } from "../../shared/api/run-reports";
import type { WorkshopDetail } from "../../shared/api/workshops";
import { Card, ErrorNote, Loading, PageTitle } from "../components/ui";
import { useRunComparison } from "../features/runs/report-queries";
import { StatusTag } from "../features/runs/words";

type Change = RunComparisonView["fixed"][number];

const GROUPS: { key: keyof Pick<RunComparisonView, "fixed" | "stillFailing" | "newlyFailing" | "otherwiseChanged" | "added" | "removed">; title: string; mark: string; empty: string }[] = [
  { key: "fixed", title: "Fixed", mark: "●", empty: "Nothing that failed before passes now." },
  { key: "stillFailing", title: "Still failing", mark: "✕", empty: "Nothing fails in both runs." },
  { key: "newlyFailing", title: "New failures", mark: "▲", empty: "Nothing newly fails." },
  { key: "otherwiseChanged", title: "Other verdict changes", mark: "~", empty: "" },
  { key: "added", title: "Only in the later run's panel", mark: "+", empty: "" },
  { key: "removed", title: "Only in the earlier run's panel", mark: "−", empty: "" },
];

/** Two runs of the same panels and recording side by side: what the later one fixed, what still fails, what is new. */
export function RunCompare() {
  const w = useOutletContext<WorkshopDetail>();
  const { runId = "", otherRunId = "" } = useParams();
  const comparison = useRunComparison(w.id, runId, otherRunId);
  if (comparison.isPending) return <Loading what="Comparing the runs" />;
  if (comparison.error)
    return (
      <div className="flex flex-col gap-3">
        <ErrorNote error={comparison.error} />
        <Link to={`/w/${w.id}/runs/${runId}/report`} className="text-calm underline">
          ← Back to the report
        </Link>
      </div>
    );
  const c = comparison.data;
  return (
    <div className="flex flex-col gap-5">
      <PageTitle sub={`Two runs of ${c.later.recordingName}`}>Comparing runs</PageTitle>
      <p className="text-2xl font-bold" role="status" data-testid="compare-headline">
        {c.headline}
      </p>
      <div className="grid gap-4 sm:grid-cols-2">
        {(["earlier", "later"] as const).map((side) => {
          const r = c[side];
          return (
            <Card key={side} title={side === "earlier" ? "Earlier run" : "Later run"}>
              <p>
                <Link to={`/w/${w.id}/runs/${r.id}/report`} className="font-semibold text-calm underline">
                  {r.name}
                </Link>
              </p>
              <p className="text-sm text-ink-soft">{new Date(r.createdAt).toLocaleString()}</p>
              <p className="mt-1 text-sm">
                ● {r.counts.pass ?? 0} passed · ✕ {r.counts.fail ?? 0} failed · ◌ {r.counts.no_data ?? 0} without data · {r.mismatchCount} mismatches
              </p>
            </Card>
          );
        })}
      </div>
      {GROUPS.map((g) => {
        const list = c[g.key];
        if (list.length === 0 && !g.empty) return null;
        return (
          <Card key={g.key} title={`${g.mark} ${g.title} (${list.length})`}>
            {list.length === 0 ? <p className="text-sm text-ink-soft">{g.empty}</p> : <ChangeList list={list} group={g.key} />}
          </Card>
        );
      })}
      <p className="text-sm text-ink-soft">{c.unchanged.length} elements kept the same verdict and did not fail in either run.</p>
    </div>
  );
}

function ChangeList({ list, group }: { list: Change[]; group: string }) {
  return (
    <ul className="flex flex-col gap-1.5 text-sm" aria-label={group}>
      {list.map((e) => (
        <li key={`${e.panelId}/${e.elementId}`} className="flex flex-wrap items-center gap-2" data-testid={`${group}-${e.elementId}`}>
          <strong>{e.label}</strong> <span className="font-mono text-xs text-ink-soft">{e.elementId}</span>
          {e.before && <StatusTag status={e.before} />}
          <span aria-label="became">→</span>
          {e.after && <StatusTag status={e.after} />}
          <span className="text-ink-soft">
            mismatches {e.mismatchesBefore} → {e.mismatchesAfter}
          </span>
        </li>
      ))}
    </ul>
  );
}

import { Card } from "../../components/ui";
import { MismatchTable } from "./MismatchTable";
import type { RunReportView } from "./queries";
import { clock, ms, StateTag, StatusTag } from "./words";

const COUNT_ORDER = ["pass", "fail", "no_data", "untested", "placeholder"];

/** The report of one run, as the workshop and a share link's reader see it. */
export function ReportBody({ report }: { report: RunReportView }) {
  const { run, summary } = report;
  const mismatches = report.panels.flatMap((p) => p.elements.flatMap((e) => e.mismatches.map((m) => ({ ...m, panelId: p.panelId, elementId: e.elementId }))));
  const labels = Object.fromEntries(report.panels.flatMap((p) => p.elements.map((e) => [e.elementId, e.label])));
  return (
    <div className="flex flex-col gap-5">
      <Card title="Summary" aside={<StateTag state={run.state} />}>
        <p className="mb-3 text-lg font-semibold" role="status" data-testid="verdict">
          {summary.passed ? "● Passed: every element showed what it should." : "✕ Not passed: some elements failed or went without data."}
        </p>
        <dl className="grid grid-cols-2 gap-x-6 gap-y-1 text-sm sm:grid-cols-4">
          <dt className="text-ink-soft">Recording</dt>
          <dd>{run.recording.name}</dd>
          <dt className="text-ink-soft">Played</dt>
          <dd>
            {clock(run.positionMs)} of {clock(run.durationMs)} at {run.speed}×
          </dd>
          <dt className="text-ink-soft">Elements</dt>
          <dd>{summary.elements}</dd>
          <dt className="text-ink-soft">Mismatches</dt>
          <dd>{summary.mismatchCount}</dd>
          <dt className="text-ink-soft">Lag p50 / p95 / max</dt>
          <dd className="font-mono">
            {ms(summary.lag.p50)} / {ms(summary.lag.p95)} / {ms(summary.lag.max)}
          </dd>
          <dt className="text-ink-soft">Created</dt>
          <dd>
            {new Date(run.createdAt).toLocaleString()}
            {run.createdBy ? ` by ${run.createdBy}` : ""}
          </dd>
        </dl>
        <ul className="mt-3 flex flex-wrap gap-3 text-sm" aria-label="Counts">
          {COUNT_ORDER.filter((k) => summary.counts[k] !== undefined).map((k) => (
            <li key={k} className="flex items-center gap-1">
              <StatusTag status={k} /> {summary.counts[k]}
            </li>
          ))}
        </ul>
      </Card>
      {report.panels.map((p) => (
        <Card key={p.panelId} title={p.name}>
          <p className="mb-3 text-sm text-ink-soft">
            {p.link.kind} link
            {Object.keys(p.link.faults).length > 0 && ` · refused frames: ${Object.entries(p.link.faults).map(([k, v]) => `${k} ${v}`).join(", ")}`}
          </p>
          {p.link.gaps.length > 0 && (
            <p className="mb-3 text-sm" aria-label="Coverage gaps">
              ◌ Without data: {p.link.gaps.map((g) => `${clock(g.fromMs)}–${clock(g.toMs)}`).join(", ")}
            </p>
          )}
          <div className="overflow-x-auto rounded-lg border border-rule">
            <table className="w-full text-left text-sm" aria-label={`Elements of ${p.name}`}>
              <thead className="border-b border-rule bg-paper/60 text-ink-soft">
                <tr>
                  <th className="px-3 py-2">Element</th>
                  <th className="px-3 py-2">Kind</th>
                  <th className="px-3 py-2">Status</th>
                  <th className="px-3 py-2 text-right">Mismatches</th>
                  <th className="px-3 py-2 text-right">Lag p50 / p95 / max</th>
                  <th className="px-3 py-2 text-right">Without data</th>
                  <th className="px-3 py-2 text-right">Reports</th>
                </tr>
              </thead>
              <tbody>
                {p.elements.map((e) => (
                  <tr key={e.elementId} className="border-b border-rule/60 last:border-0" data-testid={`report-element-${e.elementId}`}>
                    <td className="px-3 py-2">
                      <span className="font-semibold">{e.label}</span> <span className="font-mono text-xs text-ink-soft">{e.elementId}</span>
                    </td>
                    <td className="px-3 py-2">{e.kind}</td>
                    <td className="px-3 py-2">
                      <StatusTag status={e.status} />
                    </td>
                    <td className="px-3 py-2 text-right">{e.mismatchCount}</td>
                    <td className="px-3 py-2 text-right font-mono">
                      {ms(e.lag.p50)} / {ms(e.lag.p95)} / {ms(e.lag.max)}
                    </td>
                    <td className="px-3 py-2 text-right">{e.noDataMs > 0 ? ms(e.noDataMs) : "—"}</td>
                    <td className="px-3 py-2 text-right">{e.reports}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </Card>
      ))}
      <Card title="Mismatches">
        <MismatchTable mismatches={mismatches} labels={labels} />
      </Card>
    </div>
  );
}
